using HumWatch.Core.Text;

namespace HumWatch.Core.Attribution;

/// <summary>What a narrowband line most likely comes from.</summary>
public enum SourceKind
{
    /// <summary>No catalogued source explains the line.</summary>
    Unidentified = 0,

    /// <summary>The power grid's fundamental or one of its harmonics.</summary>
    Mains,

    /// <summary>A display's refresh rate or one of its harmonics.</summary>
    Display,

    /// <summary>A tone the site declared (a pump, a stimulator, a ventilation drive …).</summary>
    SiteTone,
}

/// <summary>Text forms of <see cref="SourceKind"/>, the one spelling every output uses (JSON values, topics, logs, the store).</summary>
public static class SourceKindText
{
    /// <summary>The table: "mains", "display", "site-tone", "unidentified" (an undefined value is written "unidentified").</summary>
    public static TextForms<SourceKind> Forms { get; } = new(
        SourceKind.Unidentified,
        (SourceKind.Mains, "mains"),
        (SourceKind.Display, "display"),
        (SourceKind.SiteTone, "site-tone"),
        (SourceKind.Unidentified, "unidentified"));

    /// <summary>"mains", "display", "site-tone" or "unidentified".</summary>
    public static string ToText(this SourceKind kind) => Forms.ToText(kind);

    /// <summary>Parses the text form; unknown text gives false.</summary>
    public static bool TryParse(string? text, out SourceKind kind) => Forms.TryParse(text, out kind);
}
