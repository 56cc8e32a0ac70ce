using HumWatch.Core.Text;
namespace HumWatch.Core.Tracking;

/// <summary>How lines are followed across frames: one definition of "the same line" and of its persistence for every consumer.</summary>
public sealed class TrackingOptions
{
    /// <summary>
    /// Frames in a row a line needs before anything counts it (alerts, ledger, day spectra, `check`). The default is 3
    /// (6 s at the default 2 s hop): an alpha burst can look tonal for one span; mains or a display stays.
    /// </summary>
    public int PersistFrames { get; set; } = 3;

    /// <summary>
    /// Frames of frequency history kept per line for the grid-lock test. The default is 32 (about a minute at the
    /// default hop): long enough for the grid to wander by a few hundredths of a hertz.
    /// </summary>
    public int EvidenceFrames { get; set; } = 32;

    /// <summary>Frames the line and the fundamental must share before their frequency tracks are compared. The default is 8.</summary>
    public int MinSharedFrames { get; set; } = 8;

    public IReadOnlyList<string> Validate(string? prefix = null)
    {
        var at = SettingPrefix.Of(prefix);
        var errors = new List<string>();
        if (PersistFrames is < 1 or > 100)
        {
            errors.Add($"{at}PersistFrames must be between 1 and 100 (got {PersistFrames}).");
        }

        if (EvidenceFrames is < 4 or > 1024)
        {
            errors.Add($"{at}EvidenceFrames must be between 4 and 1024 (got {EvidenceFrames}).");
        }

        if (MinSharedFrames < 3 || MinSharedFrames > EvidenceFrames)
        {
            errors.Add($"{at}MinSharedFrames must be at least 3 and at most EvidenceFrames ({EvidenceFrames}) (got {MinSharedFrames}).");
        }

        return errors;
    }
}
