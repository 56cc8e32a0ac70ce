using HumWatch.Core.Attribution;

namespace HumWatch.Core.Findings;

/// <summary>What a <see cref="FindingKey"/> is about.</summary>
public enum FindingCategory
{
    /// <summary>The stream as a whole (any line); the minute ledger's "*" row.</summary>
    All = 0,

    /// <summary>Mains fundamental or a harmonic.</summary>
    Mains,

    /// <summary>A display refresh rate or its harmonic.</summary>
    Display,

    /// <summary>A configured site tone or its harmonic.</summary>
    SiteTone,

    /// <summary>A line no catalogued source explains.</summary>
    Unidentified,

    /// <summary>A flat, clipped or non-finite channel.</summary>
    ChannelFault,
}

/// <summary>Text forms of <see cref="FindingCategory"/>: the message and store "kind" and the summary "category".</summary>
public static class FindingCategoryText
{
    /// <summary>The category of a line explained by <paramref name="kind"/>.</summary>
    public static FindingCategory Of(SourceKind kind) => kind switch
    {
        SourceKind.Mains => FindingCategory.Mains,
        SourceKind.Display => FindingCategory.Display,
        SourceKind.SiteTone => FindingCategory.SiteTone,
        _ => FindingCategory.Unidentified,
    };

    /// <summary>"all", "mains", "display", "site-tone", "unidentified" or "fault".</summary>
    public static string ToText(this FindingCategory category) => category switch
    {
        FindingCategory.All => "all",
        FindingCategory.Mains => SourceKind.Mains.ToText(),
        FindingCategory.Display => SourceKind.Display.ToText(),
        FindingCategory.SiteTone => SourceKind.SiteTone.ToText(),
        FindingCategory.ChannelFault => "fault",
        _ => SourceKind.Unidentified.ToText(),
    };

    /// <summary>Parses the text form; also reads "site", the site-tone spelling stores held before. Unknown text gives false.</summary>
    public static bool TryParse(string? text, out FindingCategory category)
    {
        switch (text)
        {
            case "all":
                category = FindingCategory.All;
                return true;
            case "fault":
                category = FindingCategory.ChannelFault;
                return true;
            case "site":
                category = FindingCategory.SiteTone;
                return true;
        }

        if (SourceKindText.TryParse(text, out var kind))
        {
            category = Of(kind);
            return true;
        }

        category = FindingCategory.Unidentified;
        return false;
    }
}
