namespace HumWatch.Host.Monitoring;

/// <summary>How streams are run. Bound from section "Monitor".</summary>
public sealed class MonitorOptions
{
    /// <summary>Chunks waiting per stream before new ones are dropped (and counted). The default is 64.</summary>
    public int StreamQueueCapacity { get; set; } = 64;

    /// <summary>A stream that sends nothing for this long is closed: its alerts clear with "stream ended". The default is 60 s.</summary>
    public double IdleCloseSeconds { get; set; } = 60;

    /// <summary>Most streams held at once; chunks of further streams are dropped and counted. The default is 2000.</summary>
    public int MaxStreams { get; set; } = 2000;

    /// <summary>Lines at or above this amplitude count as affecting a ledger minute, µV RMS. The default is 1 µV (the "minor" alert level).</summary>
    public double LedgerMinAmplitudeUvRms { get; set; } = 1;

    public IReadOnlyList<string> Validate(string prefix = "Monitor")
    {
        var errors = new List<string>();
        if (StreamQueueCapacity is < 1 or > 100_000)
        {
            errors.Add($"{prefix}:StreamQueueCapacity must be between 1 and 100000 chunks (got {StreamQueueCapacity}).");
        }

        if (!(IdleCloseSeconds >= 1 && IdleCloseSeconds <= 86_400))
        {
            errors.Add($"{prefix}:IdleCloseSeconds must be between 1 and 86400 s (got {IdleCloseSeconds}).");
        }

        if (MaxStreams is < 1 or > 100_000)
        {
            errors.Add($"{prefix}:MaxStreams must be between 1 and 100000 (got {MaxStreams}).");
        }

        if (!(LedgerMinAmplitudeUvRms >= 0))
        {
            errors.Add($"{prefix}:LedgerMinAmplitudeUvRms must be zero or more µV RMS (got {LedgerMinAmplitudeUvRms}).");
        }

        return errors;
    }
}
