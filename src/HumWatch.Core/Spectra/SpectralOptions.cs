using HumWatch.Core.Text;

namespace HumWatch.Core.Spectra;

/// <summary>Welch and framing settings. Durations are converted to whole samples at the stream's rate.</summary>
public sealed class SpectralOptions
{
    /// <summary>Welch segment length in seconds (sets the resolution, 1/SegmentSeconds Hz). The default is 4 s.</summary>
    public double SegmentSeconds { get; set; } = 4;

    /// <summary>Overlap of consecutive Welch segments as a fraction of a segment, in [0, 0.9]. The default is 0.5 (Hann, scipy's default noverlap = nperseg/2).</summary>
    public double OverlapFraction { get; set; } = 0.5;

    /// <summary>Length of the analysis span whose segments are averaged into one frame, in seconds. The default is 8 s.</summary>
    public double SpanSeconds { get; set; } = 8;

    /// <summary>Time between frames, in seconds; a whole number of segment steps. The default is 2 s.</summary>
    public double HopSeconds { get; set; } = 2;

    /// <summary>
    /// Checks the settings against each other; returns one message per problem naming the setting, empty when valid. A
    /// caller that binds these from configuration passes its key prefix (Host's "Analysis:Spectra"), and the messages name
    /// the full key; without one they name the property alone (Core knows no configuration keys).
    /// </summary>
    public IReadOnlyList<string> Validate(string? prefix = null)
    {
        prefix = SettingPrefix.Of(prefix);
        var errors = new List<string>();
        if (!(SegmentSeconds > 0) || !double.IsFinite(SegmentSeconds))
        {
            errors.Add($"{prefix}SegmentSeconds must be a positive number of seconds (got {SegmentSeconds}).");
        }

        if (!(OverlapFraction >= 0 && OverlapFraction <= 0.9))
        {
            errors.Add($"{prefix}OverlapFraction must be between 0 and 0.9 (got {OverlapFraction}).");
        }

        if (!(SpanSeconds >= SegmentSeconds) || !double.IsFinite(SpanSeconds))
        {
            errors.Add($"{prefix}SpanSeconds must be at least SegmentSeconds = {SegmentSeconds} (got {SpanSeconds}).");
        }

        if (!(HopSeconds > 0) || !double.IsFinite(HopSeconds))
        {
            errors.Add($"{prefix}HopSeconds must be a positive number of seconds (got {HopSeconds}).");
        }

        if (errors.Count == 0)
        {
            var step = SegmentSeconds * (1 - OverlapFraction);
            if (!IsWholeMultiple(HopSeconds, step))
            {
                errors.Add($"{prefix}HopSeconds = {HopSeconds} must be a whole number of segment steps (SegmentSeconds × (1 − OverlapFraction) = {step} s), so each hop adds whole segments.");
            }

            if (!IsWholeMultiple(SpanSeconds - SegmentSeconds, step))
            {
                errors.Add($"{prefix}SpanSeconds − SegmentSeconds = {SpanSeconds - SegmentSeconds} s must be a whole number of segment steps ({step} s).");
            }
        }

        return errors;
    }

    private static bool IsWholeMultiple(double value, double step)
    {
        var ratio = value / step;
        return Math.Abs(ratio - Math.Round(ratio)) < 1e-9;
    }
}
