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

    /// <summary>Seconds on CPU of every thread of this process whose name starts with <paramref name="namePrefix"/> (Linux; 0 elsewhere).</summary>
    public static double NamedThreadsSeconds(string namePrefix)
    {
        const string Tasks = "/proc/self/task";
        if (!Directory.Exists(Tasks))
        {
            return 0;
        }

        double total = 0;
        foreach (var task in Directory.EnumerateDirectories(Tasks))
        {
            try
            {
                // Linux keeps the first 15 bytes of a thread's name.
                var comm = File.ReadAllText(Path.Combine(task, "comm")).TrimEnd('\n');
                if (!comm.StartsWith(namePrefix.Length > 15 ? namePrefix[..15] : namePrefix, StringComparison.Ordinal))
                {
                    continue;
                }

                var text = File.ReadAllText(Path.Combine(task, "schedstat"));
                var space = text.IndexOf(' ', StringComparison.Ordinal);
                total += long.Parse(text.AsSpan(0, space), NumberStyles.None, CultureInfo.InvariantCulture) * 1e-9;
            }
            catch (IOException)
            {
                // The thread ended while we looked.
            }
        }

        return total;
    }
}
