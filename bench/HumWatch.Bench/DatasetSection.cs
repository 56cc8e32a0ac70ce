using System.Diagnostics;
using static HumWatch.Bench.BenchMath;

namespace HumWatch.Bench;

/// <summary>
/// The published `humwatch check` as a pipeline runs it, whole process and all: one 77 MB EDF against Debian's scipy
/// reading the same file and computing one Welch PSD of it; a 4 MB EDF (start-up dominated) under each runtime and
/// publish setting worth weighing; a folder of 100 such files in one call; and a folder of many gigabytes (memory flat,
/// table complete).
/// </summary>
internal sealed class DatasetSection : IBenchmarkSection
{
    private const string ScipyPython = "/usr/bin/python3";

    // Reads an EDF as the EDF specification lays it out (Kemp et al. 1992: 256-byte header, 256 bytes per signal, then
    // records of int16 samples signal after signal), scales digital to physical, and computes one Welch PSD of every
    // channel with the analysis' defaults (4 s Hann segments, 50 % overlap, density scaling).
    private const string ScipyScript = """
        import sys
        import numpy as np
        from scipy import signal
        path = sys.argv[1]
        with open(path, "rb") as f:
            head = f.read(256)
            ns = int(head[252:256]); nrec = int(head[236:244]); dur = float(head[244:252])
            sig = f.read(256 * ns)
            def field(offset, width):
                return [sig[ns * offset + i * width: ns * offset + (i + 1) * width] for i in range(ns)]
            pmin = np.array([float(x) for x in field(104, 8)]); pmax = np.array([float(x) for x in field(112, 8)])
            dmin = np.array([float(x) for x in field(120, 8)]); dmax = np.array([float(x) for x in field(128, 8)])
            spr = [int(x) for x in field(216, 8)]
            data = np.fromfile(f, dtype="<i2")
        labels = [x.decode("ascii").strip() for x in field(0, 16)]
        eeg = [i for i in range(ns) if labels[i] != "EDF Annotations"]
        starts = np.cumsum([0] + spr)
        records = data[: nrec * starts[-1]].reshape(nrec, starts[-1])
        n = spr[eeg[0]]
        data = np.stack([records[:, starts[i]:starts[i] + n].reshape(-1) for i in eeg])
        pmin, pmax, dmin, dmax = pmin[eeg], pmax[eeg], dmin[eeg], dmax[eeg]
        gain = (pmax - pmin) / (dmax - dmin)
        x = (data - dmin[:, None]) * gain[:, None] + pmin[:, None]
        fs = n / dur
        seg = int(round(4 * fs))
        f, p = signal.welch(x, fs=fs, window="hann", nperseg=seg, noverlap=seg // 2, scaling="density")
        print("done", p.shape[0], p.shape[1])
        """;

    public string Name => "dataset";

    public string Description => "published `humwatch check` whole-process: 77 MB EDF vs scipy read+Welch, 4 MB EDF per runtime setting, 100-file folder, large folder [--rounds N (1-15, 5)] [--large-gb G (0-100, 10; 0 skips)]";

    public int Run(string[] args)
    {
        var options = ParseIntOptions("dataset", args, ("--rounds", 1, 15), ("--large-gb", 0, 100));
        if (options is null)
        {
            return 2;
        }

        var rounds = options.GetValueOrDefault("--rounds", 5);
        var largeGb = options.GetValueOrDefault("--large-gb", 10);
        var work = Directory.CreateTempSubdirectory("humwatch-bench-dataset-");
        try
        {
            var repository = RepositoryRoot();
            if (repository is null)
            {
                Console.Error.WriteLine("dataset: no HumWatch.sln above the bench's folder; run it from a source checkout.");
                return 2;
            }

            var variants = Publish(repository, work.FullName);
            if (variants is null)
            {
                return 1;
            }

            var big = Path.Combine(work.FullName, "room-600s.edf");
            var (_, bigBytes) = CheckSection.WriteEdf(big, records: 600, seed: 23);
            var small = Path.Combine(work.FullName, "room-31s.edf");
            var (_, smallBytes) = CheckSection.WriteEdf(small, records: 31, seed: 29);
            Console.WriteLine(F($"files: 64 ch × 1000 Hz, 16-bit EDF+C of 600 s ({bigBytes / 1e6:F1} MB) and 31 s ({smallBytes / 1e6:F2} MB); simulated 50 Hz mains + harmonics + 75 Hz display; page cache warm"));
            Console.WriteLine($"load average at start: {LoadAverage()}");

            // Whole check of the 77 MB file against scipy, rounds interleaved so both see the same machine.
            var scipy = ScipyRuns(big, rounds);
            Console.WriteLine();
            Console.WriteLine($"{"77 MB EDF, whole process",-46} {"wall s",8} {"CPU s",7} {"peak MB",8} {"÷ scipy wall",13} {"÷ scipy CPU",12}");
            if (scipy is { } s)
            {
                Console.WriteLine($"scipy: {s.Version}, {ScipyPython}, BLAS/OpenMP threads 1");
                Console.WriteLine(F($"{"scipy: read + one Welch PSD",-46} {Median(s.Wall),8:F3} {Median(s.Cpu),7:F3} {Median(s.Peak),8:F0} {1.0,13:F2} {1.0,12:F2}"));
            }

            foreach (var variant in variants)
            {
                var runs = Times(() => Check(variant, big), rounds);
                var ratio = scipy is { } sc ? F($"{Median(runs.Wall) / Median(sc.Wall),13:F2} {Median(runs.Cpu) / Median(sc.Cpu),12:F2}") : $"{"n/a",13} {"n/a",12}";
                Console.WriteLine(F($"{"check, " + variant.Name,-46} {Median(runs.Wall),8:F3} {Median(runs.Cpu),7:F3} {Median(runs.Peak),8:F0} {ratio}"));
            }

            Console.WriteLine();
            Console.WriteLine($"{"4 MB EDF, whole process",-46} {"wall s",8} {"CPU s",7} {"peak MB",8}");
            foreach (var variant in variants)
            {
                var start = Times(() => Metered(variant, ["--version"]), rounds);
                Console.WriteLine(F($"{"start, " + variant.Name,-46} {Median(start.Wall),8:F3} {Median(start.Cpu),7:F3} {Median(start.Peak),8:F0}"));
                var runs = Times(() => Check(variant, small), rounds);
                Console.WriteLine(F($"{"check, " + variant.Name,-46} {Median(runs.Wall),8:F3} {Median(runs.Cpu),7:F3} {Median(runs.Peak),8:F0}"));
            }

            var chosen = variants[^1];
            Console.WriteLine();
            var folder = Path.Combine(work.FullName, "folder-100");
            FillFolder(folder, small, 100);
            var table = Path.Combine(work.FullName, "folder-100.tsv");
            var folderRuns = Times(() => Metered(chosen, ["check", folder, "--table", table]), Math.Min(rounds, 3));
            var folderBytes = smallBytes * 100;
            Console.WriteLine(F($"folder of 100 × {smallBytes / 1e6:F2} MB, one call ({chosen.Name}): {Median(folderRuns.Wall):F2} s wall, {folderBytes / 1e6 / Median(folderRuns.Wall):F0} MB/s, {Median(folderRuns.Cpu):F2} s CPU, peak working set {Median(folderRuns.Peak):F0} MB, table rows {TableRows(table)}/100"));

            if (largeGb > 0)
            {
                Large(chosen, work.FullName, largeGb);
            }
            else
            {
                Console.WriteLine("large folder: skipped (--large-gb 0)");
            }

            Console.WriteLine($"load average at end: {LoadAverage()}");
            return 0;
        }
        finally
        {
            work.Delete(recursive: true);
        }
    }

    private static void Large(PublishedVariant variant, string work, int gigabytes)
    {
        // 800 s files (102 MB) copied until the folder holds the size asked for; generation is not timed.
        var folder = Path.Combine(work, "folder-large");
        var one = Path.Combine(work, "room-800s.edf");
        var (_, bytes) = CheckSection.WriteEdf(one, records: 800, seed: 31);
        var count = (int)Math.Ceiling(gigabytes * 1e9 / bytes);
        FillFolder(folder, one, count);
        File.Delete(one);
        var table = Path.Combine(work, "folder-large.tsv");
        var run = Metered(variant, ["check", folder, "--table", table]);
        var total = bytes * (double)count;

        // Flat memory: the working set over the run's middle and last fifths against its second fifth.
        double PeakBetween(double from, double to) =>
            run.Rss.Where(r => r.Seconds >= from * run.WallSeconds && r.Seconds <= to * run.WallSeconds).Select(r => r.RssMb).DefaultIfEmpty(0).Max();
        var early = PeakBetween(0.2, 0.4);
        var late = PeakBetween(0.8, 1.0);
        Console.WriteLine(F($"large folder: {count} × {bytes / 1e6:F0} MB = {total / 1e9:F1} GB ({variant.Name}): {run.WallSeconds:F1} s wall, {total / 1e6 / run.WallSeconds:F0} MB/s, peak working set {run.PeakMb:F0} MB; working set {early:F0} MB at 20–40 % of the run, {late:F0} MB at 80–100 % ({(late / Math.Max(1, early) - 1) * 100:+0.0;-0.0} %); table rows {TableRows(table)}/{count}; exit code {run.ExitCode}"));
        Directory.Delete(folder, recursive: true);
    }

    private static void FillFolder(string folder, string source, int count)
    {
        Directory.CreateDirectory(folder);
        for (var i = 0; i < count; i++)
        {
            File.Copy(source, Path.Combine(folder, F($"session-{i:D4}.edf")));
        }
    }

    private static int TableRows(string table) => File.Exists(table) ? File.ReadLines(table).Count() - 1 : 0;

    private static MeteredRun Check(PublishedVariant variant, string file) => Metered(variant, ["check", file, "--json"]);

    private static MeteredRun Metered(PublishedVariant variant, string[] arguments)
    {
        var run = ProcessMeter.Run(variant.Program, arguments, variant.Environment);
        if (run.ExitCode is not (0 or 1))
        {
            throw new InvalidOperationException($"dataset: {variant.Name}: humwatch {string.Join(' ', arguments)} exited {run.ExitCode}: {run.Error}");
        }

        return run;
    }

    private static (List<double> Wall, List<double> Cpu, List<double> Peak) Times(Func<MeteredRun> run, int rounds)
    {
        run(); // warm-up: page cache, disk, the runtime's own files
        var (wall, cpu, peak) = (new List<double>(), new List<double>(), new List<double>());
        for (var r = 0; r < rounds; r++)
        {
            var result = run();
            wall.Add(result.WallSeconds);
            cpu.Add(result.CpuSeconds);
            peak.Add(result.PeakMb);
        }

        return (wall, cpu, peak);
    }

    private static (List<double> Wall, List<double> Cpu, List<double> Peak, string Version)? ScipyRuns(string file, int rounds)
    {
        if (!File.Exists(ScipyPython))
        {
            Console.WriteLine($"scipy: {ScipyPython} not found (Debian's python3-scipy); the scipy row is left out");
            return null;
        }

        var version = ProcessMeter.Run(ScipyPython, ["-c", "import scipy, numpy; print('scipy', scipy.__version__, 'numpy', numpy.__version__)"]);
        if (version.ExitCode != 0)
        {
            Console.WriteLine($"scipy: not importable by {ScipyPython} ({version.Error.Trim()}); the scipy row is left out");
            return null;
        }

        var script = Path.Combine(Path.GetTempPath(), $"humwatch-bench-welch-{Environment.ProcessId}.py");
        File.WriteAllText(script, ScipyScript);
        try
        {
            var single = new Dictionary<string, string> { ["OPENBLAS_NUM_THREADS"] = "1", ["OMP_NUM_THREADS"] = "1", ["MKL_NUM_THREADS"] = "1" };
            var runs = Times(() =>
            {
                var run = ProcessMeter.Run(ScipyPython, [script, file], single);
                return run.ExitCode == 0 ? run : throw new InvalidOperationException($"dataset: scipy failed: {run.Error}");
            }, rounds);
            return (runs.Wall, runs.Cpu, runs.Peak, version.Output.Trim());
        }
        finally
        {
            File.Delete(script);
        }
    }

    /// <summary>The published program under each setting weighed in bench/README.md, the shipped one last.</summary>
    private static List<PublishedVariant>? Publish(string repository, string work)
    {
        var project = Path.Combine(repository, "src", "HumWatch", "HumWatch.csproj");
        var defaults = Path.Combine(work, "publish-defaults");
        var jit = Path.Combine(work, "publish-jit");
        var perAssembly = Path.Combine(work, "publish-per-assembly");
        var shipped = Path.Combine(work, "publish-shipped");
        string[][] publishes =
        [
            ["publish", project, "-c", "Release", "-o", defaults, "-p:PublishReadyToRun=false", "-p:TieredPGO=true"],
            ["publish", project, "-c", "Release", "-o", jit, "-p:PublishReadyToRun=false"],

            // Its own intermediate folder: its ReadyToRun images have the same names as the composite's component images,
            // and the compile step is skipped when an output of that name is newer than the inputs.
            ["publish", project, "-c", "Release", "-o", perAssembly, "-p:SelfContained=false", "-p:PublishReadyToRunComposite=false", "-p:PublishReadyToRunCrossgen2ExtraArgs=", "-p:IntermediateOutputPath=obj/bench-per-assembly/"],
            ["publish", project, "-c", "Release", "-o", shipped],
        ];
        foreach (var arguments in publishes)
        {
            var watch = Stopwatch.StartNew();
            var run = ProcessMeter.Run("dotnet", arguments);
            if (run.ExitCode != 0)
            {
                Console.Error.WriteLine($"dataset: dotnet {string.Join(' ', arguments)} failed:{Environment.NewLine}{run.Output}{run.Error}");
                return null;
            }

            Console.WriteLine(F($"published: dotnet {string.Join(' ', arguments.Skip(2))} ({watch.Elapsed.TotalSeconds:F0} s, not timed)"));
        }

        var none = new Dictionary<string, string>();
        return
        [
            new("JIT, .NET defaults", Path.Combine(defaults, "humwatch"), none),
            new("JIT, QuickJitForLoops off", Path.Combine(defaults, "humwatch"), new() { ["DOTNET_TC_QuickJitForLoops"] = "0" }),
            new("JIT, TieredPGO off (tool package)", Path.Combine(jit, "humwatch"), none),
            new("ReadyToRun per assembly", Path.Combine(perAssembly, "humwatch"), none),

            // The project's publish with the runtime's default for loops back on: what main shipped until 2026-12-04.
            new("composite, QuickJitForLoops on (main)", Path.Combine(shipped, "humwatch"), new() { ["DOTNET_TC_QuickJitForLoops"] = "1" }),
            new("composite ReadyToRun (publish)", Path.Combine(shipped, "humwatch"), none),
        ];
    }

    private static string? RepositoryRoot()
    {
        for (var folder = new DirectoryInfo(AppContext.BaseDirectory); folder is not null; folder = folder.Parent)
        {
            if (File.Exists(Path.Combine(folder.FullName, "HumWatch.sln")))
            {
                return folder.FullName;
            }
        }

        return null;
    }

    private sealed record PublishedVariant(string Name, string Program, Dictionary<string, string> Environment);
}
