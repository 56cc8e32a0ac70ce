namespace HumWatch.Core.Ledger;

/// <summary>The checks shared by the per-session accumulators (the minute ledger and the hourly spectra).</summary>
internal static class SessionArguments
{
    /// <summary>Checks the ids and the amplitude level; returns the level (for a field initialiser).</summary>
    /// <exception cref="ArgumentException">A stream or session id is empty.</exception>
    /// <exception cref="ArgumentOutOfRangeException">The level is negative or not finite.</exception>
    public static double CheckedLevel(string streamId, string sessionId, double minAmplitudeUvRms)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(streamId);
        ArgumentException.ThrowIfNullOrWhiteSpace(sessionId);
        if (!(minAmplitudeUvRms >= 0) || !double.IsFinite(minAmplitudeUvRms))
        {
            throw new ArgumentOutOfRangeException(nameof(minAmplitudeUvRms), minAmplitudeUvRms, "Level must be zero or a finite positive number of µV RMS.");
        }

        return minAmplitudeUvRms;
    }
}
