using HumWatch.Core.Text;

namespace HumWatch.Core.Alerts;

/// <summary>How strong a finding is, from its amplitude against <see cref="AlertOptions"/> levels.</summary>
public enum AlertSeverity
{
    /// <summary>Below the minor level.</summary>
    None = 0,

    /// <summary>At or above <see cref="AlertOptions.MinorUvRms"/>: above amplifier noise.</summary>
    Minor,

    /// <summary>At or above <see cref="AlertOptions.MarkedUvRms"/>: rivals background EEG.</summary>
    Marked,

    /// <summary>At or above <see cref="AlertOptions.SevereUvRms"/>.</summary>
    Severe,
}

/// <summary>Text forms of <see cref="AlertSeverity"/> used in logs, the store and messages.</summary>
public static class AlertSeverityText
{
    /// <summary>The table: "none", "minor", "marked", "severe" (an undefined value is written "none").</summary>
    public static TextForms<AlertSeverity> Forms { get; } = new(
        AlertSeverity.None,
        (AlertSeverity.None, "none"),
        (AlertSeverity.Minor, "minor"),
        (AlertSeverity.Marked, "marked"),
        (AlertSeverity.Severe, "severe"));

    /// <summary>"none", "minor", "marked" or "severe".</summary>
    public static string ToText(this AlertSeverity severity) => Forms.ToText(severity);

    /// <summary>Parses the text form; unknown text gives false.</summary>
    public static bool TryParse(string? text, out AlertSeverity severity) => Forms.TryParse(text, out severity);
}
