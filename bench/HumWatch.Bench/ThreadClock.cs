using System.Diagnostics;
using System.Globalization;

namespace HumWatch.Bench;

/// <summary>
/// CPU time of the calling thread (Linux /proc/thread-self/schedstat, ns on CPU), so that timings on a shared, busy
/// machine count only the time this thread actually ran. Falls back to wall time where the file is missing.
/// </summary>
internal static class ThreadClock
{
    private const string SchedStatPath = "/proc/thread-self/schedstat";

    /// <summary>True when CPU time is available; otherwise <see cref="NowSeconds"/> is wall time.</summary>
    public static bool IsCpuTime { get; } = File.Exists(SchedStatPath);

    /// <summary>Seconds on CPU for this thread (or wall seconds), for differences only.</summary>
    public static double NowSeconds()
    {
        if (!IsCpuTime)
        {
            return Stopwatch.GetTimestamp() / (double)Stopwatch.Frequency;
        }

        var text = File.ReadAllText(SchedStatPath);
        var space = text.IndexOf(' ', StringComparison.Ordinal);
        return long.Parse(text.AsSpan(0, space), NumberStyles.None, CultureInfo.InvariantCulture) * 1e-9;
    }
}
