using HumWatch.Core.Text;
namespace HumWatch.Core.Reporting;

/// <summary>Limits that turn a recording's findings into a verdict (pass / warn / fail).</summary>
public sealed class CheckLimits
{
    /// <summary>A line at or above this median amplitude is worth a warning, µV RMS. The default is 1 µV (above an EEG amplifier's own noise — judgement, common practice, no source).</summary>
    public double WarnLineUvRms { get; set; } = 1;

    /// <summary>A line at or above this median amplitude fails the recording, µV RMS. The default is 5 µV (rivals background EEG — judgement).</summary>
    public double FailLineUvRms { get; set; } = 5;

    /// <summary>Lines present for less than this many seconds in total do not count toward the verdict. The default is 10 s.</summary>
    public double MinLineSeconds { get; set; } = 10;

    /// <summary>A channel fault covering at least this share of the recording fails it; any shorter fault warns. The default is 0.5.</summary>
    public double FailFaultFraction { get; set; } = 0.5;

    /// <summary>Whether unidentified lines count toward the verdict. The default is true.</summary>
    public bool CountUnidentifiedLines { get; set; } = true;

    public IReadOnlyList<string> Validate(string? prefix = null)
    {
        var at = SettingPrefix.Of(prefix);
        var errors = new List<string>();
        if (!(WarnLineUvRms > 0))
        {
            errors.Add($"{at}WarnLineUvRms must be a positive amplitude in µV RMS (got {WarnLineUvRms}).");
        }

        if (!(FailLineUvRms >= WarnLineUvRms))
        {
            errors.Add($"{at}FailLineUvRms must be at least WarnLineUvRms = {WarnLineUvRms} µV RMS (got {FailLineUvRms}).");
        }

        if (!(MinLineSeconds >= 0))
        {
            errors.Add($"{at}MinLineSeconds must be zero or more seconds (got {MinLineSeconds}).");
        }

        if (!(FailFaultFraction > 0 && FailFaultFraction <= 1))
        {
            errors.Add($"{at}FailFaultFraction must be above 0 and at most 1 (got {FailFaultFraction}).");
        }

        return errors;
    }
}
