using System.Diagnostics;
using System.Globalization;

namespace HumWatch.Bench;

/// <summary>
/// A long-lived Debian /usr/bin/python3 running scipy.signal.welch on the benchmark block in float64 or float32, one timed
/// run per "run64"/"run32" line, so scipy rounds interleave with ours without paying interpreter start-up. Single-threaded (BLAS/OpenMP threads = 1).
/// </summary>
internal sealed class ScipyWelchProcess : IDisposable
{
    public const string PythonPath = "/usr/bin/python3";

    // Reads the block (float64, channel-major; every value is float32-representable), checks once, writes scipy's PSD for
    // both precisions (float64 to psd_path, float32 to psd_path + "32"), then times welch per request: "run64" on the
    // float64 array, "run32" on x.astype(np.float32) (scipy then computes in float32 and returns float32).
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
        x64 = np.fromfile(data_path, dtype="<f8").reshape(int(channels), int(samples))
        x32 = x64.astype(np.float32)
        def run(x):
            return signal.welch(x, fs=float(fs), window="hann", nperseg=int(nperseg), noverlap=int(noverlap),
                                nfft=int(nperseg), detrend="constant", scaling="density", average="mean", axis=-1)
        f, p = run(x64)
        p.astype("<f8").tofile(psd_path)
        f, p = run(x32)
        if p.dtype != np.float32:
            print("float32 welch returned " + str(p.dtype), flush=True)
            sys.exit(0)
        p.astype("<f4").tofile(psd_path + "32")
        print("ready scipy " + scipy.__version__ + " numpy " + np.__version__, flush=True)
        for line in sys.stdin:
            request = line.strip()
            if request == "run64":
                x = x64
            elif request == "run32":
                x = x32
            else:
                break
            c0 = time.thread_time()
            t0 = time.perf_counter()
            run(x)
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
    /// Starts scipy on the block in <paramref name="dataPath"/>; it writes its float64 PSD to <paramref name="psdPath"/> and its
    /// float32 PSD (little-endian float32) to <paramref name="psdPath"/> + "32".
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

    /// <summary>
    /// One timed scipy.signal.welch call on the float64 block or (<paramref name="single"/>) its float32 copy: thread CPU seconds
    /// (time.thread_time) and wall seconds (time.perf_counter), measured inside Python.
    /// </summary>
    public (double CpuSeconds, double WallSeconds) RunOnce(bool single)
    {
        _process.StandardInput.WriteLine(single ? "run32" : "run64");
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
