using System.Diagnostics;
using System.Globalization;
using HumWatch.Core.Analysis;
using HumWatch.Core.Reporting;
using HumWatch.Formats;
using HumWatch.Host.Checking;
using static HumWatch.Bench.BenchMath;

namespace HumWatch.Bench;

/// <summary>
/// `humwatch check`'s code path (RecordingChecker with default options and limits) on a generated EDF of about 1 GB,
/// 64 ch × 1000 Hz, 16-bit. Each run is a fresh child process (this program's hidden `check-child` section) so the peak
/// working set is the check's own.
/// </summary>
internal sealed class CheckSection : IBenchmarkSection
{
    /// <summary>Name of the hidden section the parent starts in a child process.</summary>
    public const string ChildName = "check-child";

    private const int Channels = 64;
    private const int SampleRateHz = 1000;
    private const int UniqueRecords = 60;

    public string Name => "check";

    public string Description => "check (RecordingChecker) on a generated 64 ch × 1000 Hz 16-bit EDF: MB/s and peak working set, child process per run [--size-mb N (16–8192, default 1024)] [--rounds N (1–9, default 3)]";

    public int Run(string[] args)
    {
        var options = ParseIntOptions("check", args, ("--size-mb", 16, 8192), ("--rounds", 1, 9));
        if (options is null)
        {
            return 2;
        }

        var sizeMb = options.GetValueOrDefault("--size-mb", 1024);
        var rounds = options.GetValueOrDefault("--rounds", 3);
        var folder = Directory.CreateTempSubdirectory("humwatch-bench-check-");
        try
        {
            var path = Path.Combine(folder.FullName, "bench-room.edf");
            var generate = Stopwatch.StartNew();
            var (records, bytes) = WriteEdf(path, (long)sizeMb * 1024 * 1024);
            Console.WriteLine(F($"check: {path}: EDF+C, {Channels} ch × {SampleRateHz} Hz, 16-bit, {records} records of 1 s ({records / 3600.0:F2} h), {bytes / 1048576.0:F0} MiB; generated in {generate.Elapsed.TotalSeconds:F1} s (not timed)"));
            Console.WriteLine("data: 60 s of RoomSimulator output (50 Hz mains + harmonics, 75 Hz display) repeated; default AnalysisOptions and CheckLimits (as `humwatch check` with no config); page cache warm (file just written)");
            Console.WriteLine(DescribeSplit(path));
            Console.WriteLine($"load average at start: {LoadAverage()}");
            Console.WriteLine($"{"run",4} {"wall s",8} {"MB/s (wall)",12} {"CPU s",8} {"MB/s (CPU)",11} {"peak WS MB",11} {"verdict",8} {"lines",6}");
            var wall = new List<double>();
            var cpu = new List<double>();
            var peak = new List<double>();
            for (var r = 0; r < rounds; r++)
            {
                var child = RunChild(path);
                if (child is null)
                {
                    return 1;
                }

                var (wallSeconds, cpuSeconds, peakKb, verdict, lines) = child.Value;
                wall.Add(wallSeconds);
                cpu.Add(cpuSeconds);
                peak.Add(peakKb / 1024.0);
                Console.WriteLine(F($"{r + 1,4} {wallSeconds,8:F1} {bytes / 1e6 / wallSeconds,12:F1} {cpuSeconds,8:F1} {bytes / 1e6 / cpuSeconds,11:F1} {peakKb / 1024.0,11:F1} {verdict,8} {lines,6}"));
            }

            Console.WriteLine(F($"median: {bytes / 1e6 / Median(wall):F1} MB/s wall, {bytes / 1e6 / Median(cpu):F1} MB/s per CPU-second (process CPU time, all threads), peak working set {Median(peak):F1} MB (VmHWM of the child; MB = 10^6 B for rates, MiB for memory)"));
            Console.WriteLine($"load average at end: {LoadAverage()}");
            return 0;
        }
        finally
        {
            folder.Delete(recursive: true);
        }
    }

    /// <summary>The child: checks <paramref name="args"/>[0] once and prints "result wall cpu vmhwmKb verdict lines".</summary>
    public static int RunChild(string[] args)
    {
        if (args.Length != 1 || !File.Exists(args[0]))
        {
            Console.Error.WriteLine($"{ChildName}: expects one existing file path (got {string.Join(' ', args)}).");
            return 2;
        }

        // As `humwatch check` runs it: spectra spread over every core.
        var checker = new RecordingChecker(new AnalysisOptions(), new CheckLimits(), Environment.ProcessorCount);
        var process = Process.GetCurrentProcess();
        var cpu0 = process.TotalProcessorTime;
        var start = Stopwatch.StartNew();
        var report = checker.Check(args[0]);
        var wall = start.Elapsed.TotalSeconds;
        process.Refresh();
        var cpu = (process.TotalProcessorTime - cpu0).TotalSeconds;
        if (report.Error is not null)
        {
            Console.Error.WriteLine($"{ChildName}: {report.Error}");
            return 1;
        }

        Console.WriteLine(F($"result {wall:R} {cpu:R} {PeakKb()} {report.Verdict.ToText()} {report.Lines.Count}"));
        return 0;
    }

    private static string DescribeSplit(string path)
    {
        using var reader = RecordingReader.Open(path);
        var plan = BlockedAnalysis.TryPlan(path, reader, new AnalysisOptions(), Environment.ProcessorCount);
        var recordSeconds = ((IRecordRangeReader)reader).RecordDurationSeconds;
        return plan is null
            ? "split: none (one pass; spectra spread over the cores)"
            : F($"split: {plan.BlockCount} blocks of {plan.BlockRecords * recordSeconds:0} s over {Environment.ProcessorCount} threads, each re-reading {plan.WarmUpRecords * recordSeconds:0} s of warm-up (BlockedAnalysis)");
    }

    private static long PeakKb()
    {
        foreach (var line in File.ReadLines("/proc/self/status"))
        {
            if (line.StartsWith("VmHWM:", StringComparison.Ordinal))
            {
                return long.Parse(line.AsSpan(6).Trim().TrimEnd("kB").Trim(), NumberStyles.None, CultureInfo.InvariantCulture);
            }
        }

        return Process.GetCurrentProcess().PeakWorkingSet64 / 1024;
    }

    private static (double Wall, double Cpu, long PeakKb, string Verdict, int Lines)? RunChild(string path)
    {
        var self = Environment.ProcessPath ?? throw new InvalidOperationException("No process path to re-invoke the benchmark.");
        var start = new ProcessStartInfo(self) { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        if (string.Equals(Path.GetFileNameWithoutExtension(self), "dotnet", StringComparison.Ordinal))
        {
            start.ArgumentList.Add(typeof(CheckSection).Assembly.Location);
        }

        start.ArgumentList.Add(ChildName);
        start.ArgumentList.Add(path);
        using var child = Process.Start(start) ?? throw new InvalidOperationException($"{self} did not start.");
        var errors = child.StandardError.ReadToEndAsync();
        var output = child.StandardOutput.ReadToEnd();
        child.WaitForExit();
        var line = output.Split('\n').FirstOrDefault(l => l.StartsWith("result ", StringComparison.Ordinal));
        if (child.ExitCode != 0 || line is null)
        {
            Console.Error.WriteLine($"check: child process failed on {path} (exit {child.ExitCode}): {output} {errors.Result}".Trim());
            return null;
        }

        var parts = line.Split(' ');
        return (double.Parse(parts[1], CultureInfo.InvariantCulture), double.Parse(parts[2], CultureInfo.InvariantCulture), long.Parse(parts[3], CultureInfo.InvariantCulture), parts[4], int.Parse(parts[5], CultureInfo.InvariantCulture));
    }

    /// <summary>Writes records until the file reaches about <paramref name="targetBytes"/>; returns records and file size.</summary>
    private static (long Records, long Bytes) WriteEdf(string path, long targetBytes) =>
        WriteEdf(path, Math.Max(UniqueRecords, targetBytes / ((long)Channels * SampleRateHz * 2)), seed: 23);

    /// <summary>Writes <paramref name="records"/> records of 1 s (64 ch × 1000 Hz, 16-bit); returns records and file size.</summary>
    internal static (long Records, long Bytes) WriteEdf(string path, long records, int seed)
    {
        var room = SimulatedStreams.ContaminatedRoom("bench-check", Channels, SampleRateHz);
        var chunks = SimulatedStreams.Pregenerate(room, seed, SampleRateHz, UniqueRecords, UniqueRecords);
        var signals = new EdfWriterSignal[Channels];
        for (var c = 0; c < Channels; c++)
        {
            signals[c] = EdfWriterSignal.Edf16(room.Channels[c].Label, SampleRateHz);
        }

        using (var writer = new EdfWriter(path, new EdfWriterOptions { Signals = signals }))
        {
            for (long r = 0; r < records; r++)
            {
                // Chunks are channel-major, which is also the EDF record's signal order.
                writer.WriteRecord(chunks[r % UniqueRecords].SamplesUv);
            }
        }

        return (records, new FileInfo(path).Length);
    }
}
