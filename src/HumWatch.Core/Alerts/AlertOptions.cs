using HumWatch.Core.Text;
namespace HumWatch.Core.Alerts;

/// <summary>When a finding becomes an alert, how strong it is, and when it ends. Bound from config section "Alerts".</summary>
public sealed class AlertOptions
{
    /// <summary>Consecutive frames at or above the minor level before an alert is raised. The default is 3.</summary>
    public int RaiseAfterFrames { get; set; } = 3;

    /// <summary>Consecutive frames below the level (or without the line) before an alert clears. The default is 5.</summary>
    public int ClearAfterFrames { get; set; } = 5;

    /// <summary>Consecutive frames a new severity must hold before the alert's severity changes. The default is 3.</summary>
    public int SeverityHoldFrames { get; set; } = 3;

    /// <summary>
    /// A severity only drops once the amplitude is this far below the level it held, percent. The default is 20 %,
    /// so an amplitude hovering at a level's edge does not flap between two severities.
    /// </summary>
    public double SeverityDropMarginPercent { get; set; } = 20;

    /// <summary>Level "minor", µV RMS. The default is 1 µV: above the amplifier noise IEC 60601-2-26 allows.</summary>
    public double MinorUvRms { get; set; } = 1;

    /// <summary>Level "marked", µV RMS. The default is 5 µV: rivals background EEG.</summary>
    public double MarkedUvRms { get; set; } = 5;

    /// <summary>Level "severe", µV RMS. The default is 20 µV (judgement: dominates most background EEG).</summary>
    public double SevereUvRms { get; set; } = 20;

    /// <summary>Smallest share of analysed channels a line must reach to count, 0..1. The default is 0 (any channel).</summary>
    public double MinChannelShare { get; set; }

    /// <summary>Whether lines no catalogued source explains raise alerts. The default is true.</summary>
    public bool AlertOnUnidentified { get; set; } = true;

    /// <summary>Lowest severity at which unidentified lines count. The default is marked.</summary>
    public AlertSeverity UnidentifiedMinSeverity { get; set; } = AlertSeverity.Marked;

    /// <summary>Unidentified lines within this many PSD bins of each other are one alert. The default is 2 bins.</summary>
    public double UnidentifiedClusterBins { get; set; } = 2;

    /// <summary>Whether channel faults (flat, clipped, non-finite) raise alerts. The default is true.</summary>
    public bool ChannelFaultAlerts { get; set; } = true;

    /// <summary>Severity given to channel-fault alerts. The default is marked.</summary>
    public AlertSeverity ChannelFaultSeverity { get; set; } = AlertSeverity.Marked;

    /// <summary>Severity of an amplitude against the levels, without hysteresis.</summary>
    public AlertSeverity SeverityOf(double amplitudeUvRms)
    {
        if (amplitudeUvRms >= SevereUvRms)
        {
            return AlertSeverity.Severe;
        }

        if (amplitudeUvRms >= MarkedUvRms)
        {
            return AlertSeverity.Marked;
        }

        return amplitudeUvRms >= MinorUvRms ? AlertSeverity.Minor : AlertSeverity.None;
    }

    /// <summary>The amplitude a severity starts at, µV RMS (0 for none).</summary>
    public double LevelUvRms(AlertSeverity severity) => severity switch
    {
        AlertSeverity.Minor => MinorUvRms,
        AlertSeverity.Marked => MarkedUvRms,
        AlertSeverity.Severe => SevereUvRms,
        _ => 0,
    };

    /// <summary>One message per problem, each naming the configuration key; empty when valid.</summary>
    public IReadOnlyList<string> Validate(string? prefix = null)
    {
        var at = SettingPrefix.Of(prefix);
        var errors = new List<string>();
        if (RaiseAfterFrames is < 1 or > 1000)
        {
            errors.Add($"{at}RaiseAfterFrames must be between 1 and 1000 frames (got {RaiseAfterFrames}).");
        }

        if (ClearAfterFrames is < 1 or > 1000)
        {
            errors.Add($"{at}ClearAfterFrames must be between 1 and 1000 frames (got {ClearAfterFrames}).");
        }

        if (SeverityHoldFrames is < 1 or > 1000)
        {
            errors.Add($"{at}SeverityHoldFrames must be between 1 and 1000 frames (got {SeverityHoldFrames}).");
        }

        if (!(SeverityDropMarginPercent >= 0 && SeverityDropMarginPercent < 100))
        {
            errors.Add($"{at}SeverityDropMarginPercent must be at least 0 and below 100 % (got {SeverityDropMarginPercent}).");
        }

        if (!(MinorUvRms > 0 && double.IsFinite(MinorUvRms)))
        {
            errors.Add($"{at}MinorUvRms must be a positive number of µV RMS (got {MinorUvRms}).");
        }

        if (!(MarkedUvRms > MinorUvRms && double.IsFinite(MarkedUvRms)))
        {
            errors.Add($"{at}MarkedUvRms must be above MinorUvRms = {MinorUvRms} µV RMS (got {MarkedUvRms}).");
        }

        if (!(SevereUvRms > MarkedUvRms && double.IsFinite(SevereUvRms)))
        {
            errors.Add($"{at}SevereUvRms must be above MarkedUvRms = {MarkedUvRms} µV RMS (got {SevereUvRms}).");
        }

        if (!(MinChannelShare >= 0 && MinChannelShare <= 1))
        {
            errors.Add($"{at}MinChannelShare must be between 0 and 1 (got {MinChannelShare}).");
        }

        if (UnidentifiedMinSeverity is < AlertSeverity.Minor or > AlertSeverity.Severe)
        {
            errors.Add($"{at}UnidentifiedMinSeverity must be minor, marked or severe (got {UnidentifiedMinSeverity}).");
        }

        if (!(UnidentifiedClusterBins > 0 && UnidentifiedClusterBins <= 50))
        {
            errors.Add($"{at}UnidentifiedClusterBins must be above 0 and at most 50 bins (got {UnidentifiedClusterBins}).");
        }

        if (ChannelFaultSeverity is < AlertSeverity.Minor or > AlertSeverity.Severe)
        {
            errors.Add($"{at}ChannelFaultSeverity must be minor, marked or severe (got {ChannelFaultSeverity}).");
        }

        return errors;
    }
}
