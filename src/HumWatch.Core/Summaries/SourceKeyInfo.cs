using System.Globalization;
using HumWatch.Core.Ledger;

namespace HumWatch.Core.Summaries;

/// <summary>Kind of finding a ledger source key names.</summary>
public enum SourceCategory
{
    /// <summary>The stream as a whole ("*").</summary>
    All = 0,

    /// <summary>Mains fundamental or a harmonic.</summary>
    Mains,

    /// <summary>A display refresh rate or its harmonic.</summary>
    Display,

    /// <summary>A configured site tone.</summary>
    SiteTone,

    /// <summary>A line no catalogued source explains.</summary>
    Unidentified,

    /// <summary>A flat, clipped or non-finite channel.</summary>
    ChannelFault,
}

/// <summary>What a ledger source key (see <see cref="Alerts.AlertKeys"/>) says about its source.</summary>
/// <param name="Key">The key as stored.</param>
/// <param name="Category">Kind of source.</param>
/// <param name="Name">Source name ("mains", "display 75 Hz", "pump room drive"), channel label for faults.</param>
/// <param name="Harmonic">Harmonic number of an identified line, else null.</param>
/// <param name="FrequencyHz">Frequency written in an unidentified key, else null.</param>
/// <param name="FaultText">"flat", "clipped" or "non-finite" for faults, else null.</param>
public sealed record SourceKeyInfo(string Key, SourceCategory Category, string Name, int? Harmonic, double? FrequencyHz, string? FaultText)
{
    /// <summary>Category text used in summaries: "all", "mains", "display", "site", "unidentified", "fault".</summary>
    public static string CategoryText(SourceCategory category) => category switch
    {
        SourceCategory.Mains => "mains",
        SourceCategory.Display => "display",
        SourceCategory.SiteTone => "site",
        SourceCategory.Unidentified => "unidentified",
        SourceCategory.ChannelFault => "fault",
        _ => "all",
    };

    /// <summary>Short human label: "mains h3", "display 75 Hz h2", "site pump room drive h1", "unidentified 37.25 Hz", "Fp1 flat".</summary>
    public string Label => Category switch
    {
        SourceCategory.Mains or SourceCategory.Display => string.Create(CultureInfo.InvariantCulture, $"{Name} h{Harmonic}"),
        SourceCategory.SiteTone => string.Create(CultureInfo.InvariantCulture, $"site {Name} h{Harmonic}"),
        SourceCategory.Unidentified => FrequencyHz is { } hz ? string.Create(CultureInfo.InvariantCulture, $"unidentified {hz:0.00} Hz") : Key,
        SourceCategory.ChannelFault => $"{Name} {FaultText}",
        _ => "any line",
    };

    /// <summary>Parses a key; unknown shapes are treated as unidentified so nothing is dropped.</summary>
    public static SourceKeyInfo Parse(string key)
    {
        ArgumentNullException.ThrowIfNull(key);
        if (key == MinuteLedger.AllSourcesKey)
        {
            return new SourceKeyInfo(key, SourceCategory.All, "any line", null, null, null);
        }

        if (key.StartsWith("fault/", StringComparison.Ordinal))
        {
            var last = key.LastIndexOf('/');
            var channel = last > 6 ? key[6..last] : key[6..];
            var text = last > 6 ? key[(last + 1)..] : "fault";
            return new SourceKeyInfo(key, SourceCategory.ChannelFault, channel, null, null, text);
        }

        if (key.StartsWith("unidentified/", StringComparison.Ordinal))
        {
            var text = key["unidentified/".Length..];
            if (text.EndsWith("Hz", StringComparison.Ordinal))
            {
                text = text[..^2];
            }

            double? hz = double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out var f) ? f : null;
            return new SourceKeyInfo(key, SourceCategory.Unidentified, "unidentified", null, hz, null);
        }

        var slash = key.LastIndexOf("/h", StringComparison.Ordinal);
        if (slash > 0 && int.TryParse(key.AsSpan(slash + 2), NumberStyles.None, CultureInfo.InvariantCulture, out var harmonic))
        {
            var name = key[..slash];
            if (name == "mains")
            {
                return new SourceKeyInfo(key, SourceCategory.Mains, name, harmonic, null, null);
            }

            if (name.StartsWith("site:", StringComparison.Ordinal))
            {
                return new SourceKeyInfo(key, SourceCategory.SiteTone, name[5..], harmonic, null, null);
            }

            return new SourceKeyInfo(key, SourceCategory.Display, name, harmonic, null, null);
        }

        return new SourceKeyInfo(key, SourceCategory.Unidentified, key, null, null, null);
    }
}
