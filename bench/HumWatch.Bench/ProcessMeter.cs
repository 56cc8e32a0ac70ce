using System.Diagnostics;
using System.Globalization;

namespace HumWatch.Bench;

/// <summary>One finished child process as measured from outside: wall and CPU time, peak working set, a sampled RSS curve.</summary>
internal sealed record MeteredRun(int ExitCode, double WallSeconds, double CpuSeconds, double PeakMb, IReadOnlyList<(double Seconds, double RssMb)> Rss, string Output, string Error);

/// <summary>
/// Runs a whole program (the published `humwatch`, Debian's python3) and reads its CPU time (utime + stime of
/// /proc/PID/stat) and peak working set (VmHWM of /proc/PID/status) every few milliseconds while it lives: the last
/// reading before it exits stands for the whole run, so a run's CPU is short by at most one poll interval.
/// </summary>
internal static class ProcessMeter
{
    private const int PollMilliseconds = 5;

    // USER_HZ: the unit of /proc/PID/stat's times, 100 on every Linux the kernel ABI allows (man 5 proc).
    private const double TicksPerSecond = 100;

    public static MeteredRun Run(string program, IEnumerable<string> arguments, IReadOnlyDictionary<string, string>? environment = null)
    {
        var start = new ProcessStartInfo(program) { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        foreach (var argument in arguments)
        {
            start.ArgumentList.Add(argument);
        }

        foreach (var (name, value) in environment ?? new Dictionary<string, string>())
        {
            start.Environment[name] = value;
        }

        var wall = Stopwatch.StartNew();
        using var process = Process.Start(start) ?? throw new InvalidOperationException($"{program} did not start.");
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        var stat = $"/proc/{process.Id}/stat";
        var status = $"/proc/{process.Id}/status";
        double cpu = 0, peakKb = 0;
        var rss = new List<(double, double)>();
        var nextRssSample = 0.0;
        while (!process.HasExited)
        {
            try
            {
                cpu = CpuSeconds(File.ReadAllText(stat));
                var (hwm, now) = Memory(File.ReadAllLines(status));
                peakKb = Math.Max(peakKb, hwm);
                if (wall.Elapsed.TotalSeconds >= nextRssSample)
                {
                    rss.Add((wall.Elapsed.TotalSeconds, now / 1024.0));
                    nextRssSample += 0.5;
                }
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or FormatException or IndexOutOfRangeException)
            {
                // Exited between the check and the read: the previous reading stands.
            }

            process.WaitForExit(PollMilliseconds);
        }

        process.WaitForExit();
        return new MeteredRun(process.ExitCode, wall.Elapsed.TotalSeconds, cpu, peakKb / 1024.0, rss, output.Result, error.Result);
    }

    private static double CpuSeconds(string stat)
    {
        // Fields after the command name, which is in parentheses and may hold spaces: state is field 3, utime 14, stime 15.
        var fields = stat[(stat.LastIndexOf(')') + 2)..].Split(' ');
        return (long.Parse(fields[11], CultureInfo.InvariantCulture) + long.Parse(fields[12], CultureInfo.InvariantCulture)) / TicksPerSecond;
    }

    private static (double HwmKb, double RssKb) Memory(string[] status)
    {
        double hwm = 0, rss = 0;
        foreach (var line in status)
        {
            if (line.StartsWith("VmHWM:", StringComparison.Ordinal))
            {
                hwm = Kb(line);
            }
            else if (line.StartsWith("VmRSS:", StringComparison.Ordinal))
            {
                rss = Kb(line);
            }
        }

        return (hwm, rss);
    }

    private static double Kb(string line) =>
        double.Parse(line.AsSpan(6).Trim().TrimEnd("kB").Trim(), NumberStyles.None, CultureInfo.InvariantCulture);
}
