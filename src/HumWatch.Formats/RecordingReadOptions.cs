namespace HumWatch.Formats;

/// <summary>How recordings are read.</summary>
public sealed class RecordingReadOptions
{
    /// <summary>Signals sampled slower than this are skipped (too slow to show line noise). Default 25 Hz; must be positive and finite.</summary>
    public double MinAnalysisRateHz { get; set; } = 25;

    internal void Validate()
    {
        if (!double.IsFinite(MinAnalysisRateHz) || MinAnalysisRateHz <= 0)
        {
            throw new ArgumentOutOfRangeException(nameof(MinAnalysisRateHz), MinAnalysisRateHz, "Must be a positive, finite number of Hz.");
        }
    }
}
