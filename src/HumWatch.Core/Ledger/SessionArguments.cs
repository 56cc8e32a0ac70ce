namespace HumWatch.Core.Ledger;

/// <summary>The checks shared by the per-session accumulators (the minute ledger and the hourly spectra).</summary>
internal static class SessionArguments
{
    /// <exception cref="ArgumentException">A stream or session id is empty.</exception>
    /// <exception cref="ArgumentOutOfRangeException">The level is negative or not finite.</exception>
    public static void Check(string streamId, string sessionId, double minAmplitudeUvRms)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(streamId);
        ArgumentException.ThrowIfNullOrWhiteSpace(sessionId);
        if (!(minAmplitudeUvRms >= 0) || !double.IsFinite(minAmplitudeUvRms))
        {
            throw new ArgumentOutOfRangeException(nameof(minAmplitudeUvRms), minAmplitudeUvRms, "Level must be zero or a finite positive number of µV RMS.");
        }
    }
}
