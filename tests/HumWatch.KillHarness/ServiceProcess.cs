using System.Diagnostics;
using System.Net.Sockets;
using System.Runtime.InteropServices;

namespace HumWatch.KillHarness;

/// <summary>
/// The real `humwatch run` (humwatch.dll built next to the harness) as a child process on fixed loopback ports, so a
/// restarted process is found where the killed one was. Output goes to the log file the caller names (appended at
/// each start). Settings beyond the harness's own come as extra `--set KEY=VALUE` arguments, after them, so they win.
/// </summary>
internal sealed partial class ServiceProcess : IDisposable
{
    /// <summary>
    /// Mains fixed: rooms with both a 50 Hz and a 60 Hz line would otherwise make the estimate a coin toss. Other
    /// commands on the same store (`summary`) need it too: it places the mains plot of a day without a fundamental.
    /// </summary>
    public const string MainsSetting = "Analysis:Sources:MainsHz=50";

    private const int SigTerm = 15;
    private readonly Process _process;
    private readonly StreamWriter _log;

    private ServiceProcess(Process process, StreamWriter log)
    {
        _process = process;
        _log = log;
    }

    public int Id => _process.Id;

    public bool HasExited => _process.HasExited;

    public static async Task<ServiceProcess> StartAsync(string dataFolder, int ingestPort, int publishPort, string logPath, CancellationToken cancel, IReadOnlyList<string>? extraSettings = null)
    {
        var arguments = new List<string>
        {
            "run", "--data", dataFolder,
            "--set", $"Ingest:Endpoints:0:Address=tcp://127.0.0.1:{ingestPort}",
            "--set", $"Publish:Endpoint=tcp://127.0.0.1:{publishPort}",
            "--set", "Web:Endpoint=http://127.0.0.1:0",
            "--set", "Publish:StatusIntervalSeconds=1",
            "--set", "Inbox:StableSeconds=0.5",
            "--set", "Inbox:RescanSeconds=0.5",

            "--set", MainsSetting,

            // The day summaries are not under test here; they would only add load.
            "--set", "Summaries:Enabled=false",
            "--set", "Logs:ConsoleLevel=Warning",
        };
        foreach (var setting in extraSettings ?? [])
        {
            arguments.Add("--set");
            arguments.Add(setting);
        }

        var (process, log) = Launch(dataFolder, arguments, logPath);
        var service = new ServiceProcess(process, log);

        // Ready when the ingest socket accepts a connection (the PULL socket is bound during start).
        var deadline = DateTime.UtcNow.AddSeconds(60);
        while (DateTime.UtcNow < deadline)
        {
            cancel.ThrowIfCancellationRequested();
            if (process.HasExited)
            {
                throw new InvalidOperationException($"humwatch run exited with code {process.ExitCode} during start; see {logPath}");
            }

            using var probe = new TcpClient();
            try
            {
                await probe.ConnectAsync("127.0.0.1", ingestPort, cancel);
                return service;
            }
            catch (SocketException)
            {
                await Task.Delay(50, cancel);
            }
        }

        service.Kill();
        service.Dispose();
        throw new TimeoutException($"humwatch run did not bind tcp://127.0.0.1:{ingestPort} within 60 s; see {logPath}");
    }

    /// <summary>Runs another `humwatch` command (e.g. `summary`) to its end, its output appended to <paramref name="logPath"/>; returns the exit code.</summary>
    public static async Task<int> RunToEndAsync(string workingFolder, IReadOnlyList<string> arguments, string logPath, TimeSpan timeout)
    {
        var (process, log) = Launch(workingFolder, arguments, logPath);
        using var service = new ServiceProcess(process, log);
        using var wait = new CancellationTokenSource(timeout);
        try
        {
            await process.WaitForExitAsync(wait.Token);
        }
        catch (OperationCanceledException)
        {
            service.Kill();
            throw new TimeoutException($"humwatch {string.Join(' ', arguments)} did not finish within {timeout.TotalSeconds} s; see {logPath}");
        }

        // The exit is seen before the last redirected lines; the parameterless wait lets them reach the log.
        await process.WaitForExitAsync(CancellationToken.None);
        return process.ExitCode;
    }

    /// <summary>SIGKILL: no handler runs, nothing is flushed.</summary>
    public void Kill()
    {
        if (!_process.HasExited)
        {
            _process.Kill(); // Process.Kill sends SIGKILL on Unix.
        }

        _process.WaitForExit();
    }

    /// <summary>SIGTERM, the orderly stop; returns the exit code.</summary>
    public async Task<int> StopAsync(TimeSpan timeout)
    {
        if (!_process.HasExited)
        {
            _ = NativeKill(_process.Id, SigTerm);
        }

        using var wait = new CancellationTokenSource(timeout);
        await _process.WaitForExitAsync(wait.Token);
        return _process.ExitCode;
    }

    public void Dispose()
    {
        _process.Dispose();
        _log.Dispose();
    }

    private static (Process Process, StreamWriter Log) Launch(string workingFolder, IReadOnlyList<string> arguments, string logPath)
    {
        var info = new ProcessStartInfo("dotnet")
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
            WorkingDirectory = workingFolder,
        };
        info.ArgumentList.Add(Path.Combine(AppContext.BaseDirectory, "humwatch.dll"));
        foreach (var argument in arguments)
        {
            info.ArgumentList.Add(argument);
        }

        var process = Process.Start(info) ?? throw new InvalidOperationException($"could not start humwatch {arguments[0]}");
        var log = new StreamWriter(logPath, append: true) { AutoFlush = true };
        process.OutputDataReceived += (_, e) => Write(log, e.Data);
        process.ErrorDataReceived += (_, e) => Write(log, e.Data);
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();
        return (process, log);
    }

    private static void Write(StreamWriter log, string? line)
    {
        if (line is null)
        {
            return;
        }

        lock (log)
        {
            log.WriteLine(line);
        }
    }

    [LibraryImport("libc", EntryPoint = "kill")]
    private static partial int NativeKill(int pid, int signal);
}
