using System.Globalization;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;

namespace HumWatch.Core.Findings;

/// <summary>
/// Which finding an alert, a minute-ledger row or a spectrum mark is about: a source and harmonic, an unidentified
/// line's frequency, or a channel fault. Typed inside the process; <see cref="ToString"/> and <see cref="Parse"/> are the
/// one text form, used only where a key leaves it (message and summary JSON, the store, logs).
/// </summary>
/// <remarks>
/// Text forms: <c>*</c> (the stream as a whole), <c>mains/h3</c>, <c>display 75 Hz/h2</c>,
/// <c>site-tone:pump room drive/h1</c>, <c>unidentified/37.25Hz</c> (frequency to 0.01 Hz), <c>fault/Fp1/flat</c>.
/// <see cref="Parse"/> also reads <c>site:&lt;name&gt;/h&lt;n&gt;</c>, the site-tone spelling of stores written before, so
/// both spellings name the same finding. Text of no known shape is kept as an unrecognised unidentified key that
/// prints back as it was, so a summary never drops a stored row.
/// </remarks>
public readonly record struct FindingKey
{
    private const string AllText = "*";
    private const string MainsName = "mains";
    private const string UnidentifiedName = "unidentified";
    private const string SiteTonePrefix = "site-tone:";
    private const string OldSiteTonePrefix = "site:";
    private const string UnidentifiedPrefix = "unidentified/";
    private const string FaultPrefix = "fault/";
    private const string HarmonicMark = "/h";

    private readonly string? _name;
    private readonly string? _unrecognisedText;

    private FindingKey(FindingCategory category, string? name, int? harmonic, double? frequencyHz, ChannelFaultKind? faultKind, string? unrecognisedText = null)
    {
        Category = category;
        _name = name;
        Harmonic = harmonic;
        FrequencyHz = frequencyHz;
        FaultKind = faultKind;
        _unrecognisedText = unrecognisedText;
    }

    /// <summary>The stream as a whole: "*" (also <c>default</c>).</summary>
    public static FindingKey All => default;

    /// <summary>What the key is about.</summary>
    public FindingCategory Category { get; }

    /// <summary>Source name ("mains", "display 75 Hz", a site tone's name), the channel label of a fault, "unidentified" for unidentified lines, "" for <see cref="All"/>.</summary>
    public string Name => _name ?? "";

    /// <summary>Harmonic number of an identified line (1 = fundamental); null otherwise.</summary>
    public int? Harmonic { get; }

    /// <summary>Frequency of an unidentified line, Hz, rounded to 0.01 Hz as in the text form; null otherwise.</summary>
    public double? FrequencyHz { get; }

    /// <summary>The fault of a channel-fault key; null otherwise.</summary>
    public ChannelFaultKind? FaultKind { get; }

    /// <summary>False for text of no known shape read by <see cref="Parse"/>.</summary>
    public bool IsRecognised => _unrecognisedText is null;

    /// <summary>Short human label: "mains h3", "display 75 Hz h2", "site-tone pump room drive h1", "unidentified 37.25 Hz", "Fp1 flat", "any line".</summary>
    public string Label => Category switch
    {
        FindingCategory.Mains or FindingCategory.Display => string.Create(CultureInfo.InvariantCulture, $"{Name} h{Harmonic}"),
        FindingCategory.SiteTone => string.Create(CultureInfo.InvariantCulture, $"{FindingCategory.SiteTone.ToText()} {Name} h{Harmonic}"),
        FindingCategory.Unidentified => FrequencyHz is { } hz ? string.Create(CultureInfo.InvariantCulture, $"unidentified {hz:0.00} Hz") : ToString(),
        FindingCategory.ChannelFault => $"{Name} {FaultKind?.ToText()}",
        _ => "any line",
    };

    /// <summary>Mains harmonic <paramref name="harmonic"/> (1 = fundamental).</summary>
    public static FindingKey Mains(int harmonic) => new(FindingCategory.Mains, MainsName, CheckHarmonic(harmonic), null, null);

    /// <summary>A display rate's harmonic; <paramref name="name"/> is the catalogue name, e.g. "display 75 Hz".</summary>
    public static FindingKey Display(string name, int harmonic) => new(FindingCategory.Display, CheckName(name), CheckHarmonic(harmonic), null, null);

    /// <summary>A site tone's harmonic; <paramref name="name"/> is the tone's configured name.</summary>
    public static FindingKey SiteTone(string name, int harmonic) => new(FindingCategory.SiteTone, CheckName(name), CheckHarmonic(harmonic), null, null);

    /// <summary>An unidentified line; the frequency is kept to 0.01 Hz, as in the text form.</summary>
    public static FindingKey Unidentified(double frequencyHz)
    {
        if (!double.IsFinite(frequencyHz) || frequencyHz < 0)
        {
            throw new ArgumentOutOfRangeException(nameof(frequencyHz), frequencyHz, "An unidentified line needs a finite, non-negative frequency.");
        }

        // n / 100 with integer n is the double nearest the two-decimal value, so text and number round-trip exactly.
        var rounded = Math.Round(frequencyHz * 100, MidpointRounding.AwayFromZero) / 100;
        return new(FindingCategory.Unidentified, UnidentifiedName, null, rounded, null);
    }

    /// <summary>A fault of the channel labelled <paramref name="channelLabel"/>.</summary>
    public static FindingKey ChannelFault(string channelLabel, ChannelFaultKind kind)
    {
        ArgumentNullException.ThrowIfNull(channelLabel);
        return new(FindingCategory.ChannelFault, channelLabel, null, null, kind);
    }

    /// <summary>The key of a line explained by <paramref name="source"/>; unidentified lines are keyed by <paramref name="frequencyHz"/>.</summary>
    public static FindingKey ForLine(SourceMatch source, double frequencyHz) => source.Kind switch
    {
        SourceKind.Mains => Mains(source.Harmonic),
        SourceKind.Display => Display(source.Name, source.Harmonic),
        SourceKind.SiteTone => SiteTone(source.Name, source.Harmonic),
        _ => Unidentified(frequencyHz),
    };

    /// <summary>
    /// The bookkeeping key of a line (minute ledger, hourly spectra): as <see cref="ForLine(SourceMatch, double)"/>, but an
    /// unidentified line is keyed by its nearest bin so that a steady tone keeps one key.
    /// </summary>
    public static FindingKey ForLine(SourceMatch source, double frequencyHz, double binWidthHz) =>
        source.IsIdentified ? ForLine(source, frequencyHz) : Unidentified(Math.Round(frequencyHz / binWidthHz) * binWidthHz);

    /// <summary>
    /// Reads the text form, including every shape written so far (<c>site:</c> for site tones). Text of no known shape
    /// gives an unrecognised unidentified key (<see cref="IsRecognised"/> false) that prints back unchanged.
    /// </summary>
    public static FindingKey Parse(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        if (text == AllText)
        {
            return All;
        }

        if (text.StartsWith(FaultPrefix, StringComparison.Ordinal))
        {
            var last = text.LastIndexOf('/');
            return last >= FaultPrefix.Length && ChannelFaultKindText.TryParse(text.AsSpan(last + 1), out var kind)
                ? ChannelFault(text[FaultPrefix.Length..last], kind)
                : Unrecognised(text);
        }

        if (text.StartsWith(UnidentifiedPrefix, StringComparison.Ordinal))
        {
            var number = text.AsSpan(UnidentifiedPrefix.Length);
            if (number.EndsWith("Hz", StringComparison.Ordinal))
            {
                number = number[..^2];
            }

            return double.TryParse(number, NumberStyles.Float, CultureInfo.InvariantCulture, out var hz) && double.IsFinite(hz) && hz >= 0
                ? Unidentified(hz)
                : Unrecognised(text);
        }

        var mark = text.LastIndexOf(HarmonicMark, StringComparison.Ordinal);
        if (mark > 0
            && int.TryParse(text.AsSpan(mark + HarmonicMark.Length), NumberStyles.None, CultureInfo.InvariantCulture, out var harmonic)
            && harmonic >= 1)
        {
            var name = text[..mark];
            if (name == MainsName)
            {
                return Mains(harmonic);
            }

            var prefix = name.StartsWith(SiteTonePrefix, StringComparison.Ordinal) ? SiteTonePrefix.Length
                : name.StartsWith(OldSiteTonePrefix, StringComparison.Ordinal) ? OldSiteTonePrefix.Length
                : 0;
            if (prefix > 0)
            {
                return name.Length > prefix ? SiteTone(name[prefix..], harmonic) : Unrecognised(text);
            }

            return Display(name, harmonic);
        }

        return Unrecognised(text);
    }

    /// <summary>The text form (see the type's remarks).</summary>
    public override string ToString() => Category switch
    {
        FindingCategory.Mains => string.Create(CultureInfo.InvariantCulture, $"{MainsName}{HarmonicMark}{Harmonic}"),
        FindingCategory.Display => string.Create(CultureInfo.InvariantCulture, $"{Name}{HarmonicMark}{Harmonic}"),
        FindingCategory.SiteTone => string.Create(CultureInfo.InvariantCulture, $"{SiteTonePrefix}{Name}{HarmonicMark}{Harmonic}"),
        FindingCategory.Unidentified => _unrecognisedText ?? string.Create(CultureInfo.InvariantCulture, $"{UnidentifiedPrefix}{FrequencyHz:0.00}Hz"),
        FindingCategory.ChannelFault => $"{FaultPrefix}{Name}/{FaultKind?.ToText()}",
        _ => AllText,
    };

    /// <summary>Orders keys as their text forms (ordinal), the order lists had when keys were text. Formats both keys: not for hot loops.</summary>
    public static IComparer<FindingKey> TextOrder { get; } = Comparer<FindingKey>.Create(static (a, b) => string.CompareOrdinal(a.ToString(), b.ToString()));

    private static FindingKey Unrecognised(string text) => new(FindingCategory.Unidentified, UnidentifiedName, null, null, null, text);

    private static int CheckHarmonic(int harmonic)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(harmonic, 1);
        return harmonic;
    }

    private static string CheckName(string name)
    {
        ArgumentException.ThrowIfNullOrEmpty(name);
        return name;
    }
}
