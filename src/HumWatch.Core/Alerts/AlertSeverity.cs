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

/// <summary>Text forms used in logs, the store and messages.</summary>
public static class AlertSeverityText
{
    /// <summary>"none", "minor", "marked" or "severe".</summary>
    public static string ToText(this AlertSeverity severity) => severity switch
    {
        AlertSeverity.Minor => "minor",
        AlertSeverity.Marked => "marked",
        AlertSeverity.Severe => "severe",
        _ => "none",
    };

    /// <summary>Parses the text form; unknown text gives false.</summary>
    public static bool TryParse(string? text, out AlertSeverity severity)
    {
        severity = text switch
        {
            "minor" => AlertSeverity.Minor,
            "marked" => AlertSeverity.Marked,
            "severe" => AlertSeverity.Severe,
            "none" => AlertSeverity.None,
            _ => (AlertSeverity)(-1),
        };
        return severity >= AlertSeverity.None;
    }
}
