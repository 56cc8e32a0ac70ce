using System.Diagnostics;
using System.Globalization;

namespace HumWatch.Bench;

/// <summary>
/// A long-lived Debian /usr/bin/python3 running scipy.signal.welch on the benchmark block, one timed run per "run" line,
/// so scipy rounds interleave with ours without paying interpreter start-up. Single-threaded (BLAS/OpenMP threads = 1).
/// </summary>
internal sealed class ScipyWelchProcess : IDisposable
{
    public const string PythonPath = "/usr/bin/python3";

    // Reads the block (float64, channel-major), checks once, writes scipy's PSD, then times welch per request.
    private const string Script = """
        import sys, time
        import numpy as np
        try:
            import scipy
            from scipy import signal
        except ImportError as e:
            print("missing " + str(e), flush=True)
            sys.exit(0)
        data_path, psd_path, channels, samples, fs, nperseg, noverlap = sys.argv[1:8]
        x = np.fromfile(data_path, dtype="<f8").reshape(int(channels), int(samples))
        def run():
            return signal.welch(x, fs=float(fs), window="hann", nperseg=int(nperseg), noverlap=int(noverlap),
                                nfft=int(nperseg), detrend="constant", scaling="density", average="mean", axis=-1)
        f, p = run()
        p.astype("<f8").tofile(psd_path)
        print("ready scipy " + scipy.__version__ + " numpy " + np.__version__, flush=True)
        for line in sys.stdin:
            if line.strip() != "run":
                break
            c0 = time.thread_time()
            t0 = time.perf_counter()
            run()
            t1 = time.perf_counter()
            c1 = time.thread_time()
            print(repr(c1 - c0) + " " + repr(t1 - t0), flush=True)
        """;

    private readonly Process _process;
    private readonly string _scriptPath;

    private ScipyWelchProcess(Process process, string scriptPath, string versions)
    {
        _process = process;
        _scriptPath = scriptPath;
        Versions = versions;
    }

    /// <summary>"scipy x.y.z numpy a.b.c" as reported by the interpreter.</summary>
    public string Versions { get; }

    /// <summary>
    /// Starts scipy on the block in <paramref name="dataPath"/>; it writes its PSD to <paramref name="psdPath"/>.
    /// Returns null with <paramref name="reason"/> when /usr/bin/python3 or scipy is missing.
    /// </summary>
    public static ScipyWelchProcess? TryStart(string dataPath, string psdPath, int channels, int samples, double fs, int nperseg, int noverlap, out string reason)
    {
        if (!File.Exists(PythonPath))
        {
            reason = $"{PythonPath} not found";
            return null;
        }

        var scriptPath = Path.Combine(Path.GetTempPath(), $"humwatch-bench-welch-{Environment.ProcessId}.py");
        File.WriteAllText(scriptPath, Script);
        var start = new ProcessStartInfo(PythonPath)
        {
            RedirectStandardInput = true,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add(scriptPath);
        foreach (var a in new[] { dataPath, psdPath, channels.ToString(CultureInfo.InvariantCulture), samples.ToString(CultureInfo.InvariantCulture), fs.ToString("R", CultureInfo.InvariantCulture), nperseg.ToString(CultureInfo.InvariantCulture), noverlap.ToString(CultureInfo.InvariantCulture) })
        {
            start.ArgumentList.Add(a);
        }

        foreach (var name in new[] { "OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS" })
        {
            start.Environment[name] = "1";
        }

        var process = Process.Start(start);
        if (process is null)
        {
            File.Delete(scriptPath);
            reason = $"{PythonPath} did not start";
            return null;
        }

        var first = process.StandardOutput.ReadLine();
        if (first is null || !first.StartsWith("ready ", StringComparison.Ordinal))
        {
            var error = process.StandardError.ReadToEnd();
            process.WaitForExit();
            process.Dispose();
            File.Delete(scriptPath);
            reason = first is not null && first.StartsWith("missing", StringComparison.Ordinal)
                ? $"scipy not importable by {PythonPath} ({first})"
                : $"{PythonPath} failed: {first} {error}".Trim();
            return null;
        }

        reason = string.Empty;
        return new ScipyWelchProcess(process, scriptPath, first["ready ".Length..]);
    }

    /// <summary>One timed scipy.signal.welch call: thread CPU seconds (time.thread_time) and wall seconds (time.perf_counter), measured inside Python.</summary>
    public (double CpuSeconds, double WallSeconds) RunOnce()
    {
        _process.StandardInput.WriteLine("run");
        _process.StandardInput.Flush();
        var line = _process.StandardOutput.ReadLine() ?? throw new InvalidOperationException($"{PythonPath} ended early: {_process.StandardError.ReadToEnd()}");
        var space = line.IndexOf(' ', StringComparison.Ordinal);
        return (double.Parse(line.AsSpan(0, space), CultureInfo.InvariantCulture), double.Parse(line.AsSpan(space + 1), CultureInfo.InvariantCulture));
    }

    public void Dispose()
    {
        try
        {
            _process.StandardInput.WriteLine("quit");
            _process.StandardInput.Close();
            if (!_process.WaitForExit(10_000))
            {
                _process.Kill();
            }
        }
        finally
        {
            _process.Dispose();
            File.Delete(_scriptPath);
        }
    }
}
