using System.Diagnostics;

namespace HumWatch.Host.Tests.Ingest.Support;

/// <summary>Runs the committed pyzmq scripts in tests/fixtures/zmq with Debian's /usr/bin/python3.</summary>
internal static class PythonPeer
{
    public const string Python = "/usr/bin/python3";

    private static readonly Lazy<string?> MissingReason = new(FindMissing);

    /// <summary>Why the peer cannot run here, or null when /usr/bin/python3 imports zmq.</summary>
    public static string? WhyUnavailable => MissingReason.Value;

    public static string Script(string name) => Path.Combine(AppContext.BaseDirectory, "fixtures", "zmq", name);

    public static Process Start(string script, params string[] arguments)
    {
        var info = new ProcessStartInfo(Python)
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        info.ArgumentList.Add(Script(script));
        foreach (var argument in arguments)
        {
            info.ArgumentList.Add(argument);
        }

        return Process.Start(info) ?? throw new InvalidOperationException($"Could not start {Python} {script}.");
    }

    /// <summary>Runs a script to completion (bounded) and returns exit code, stdout and stderr.</summary>
    public static async Task<(int ExitCode, string Output, string Error)> RunAsync(string script, params string[] arguments)
    {
        using var process = Start(script, arguments);
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        using var cts = new CancellationTokenSource(TimeSpan.FromSeconds(60));
        try
        {
            await process.WaitForExitAsync(cts.Token);
        }
        catch (OperationCanceledException)
        {
            process.Kill(entireProcessTree: true);
            throw new TimeoutException($"{script} did not finish within 60 s: {await error}");
        }

        return (process.ExitCode, await output, await error);
    }

    private static string? FindMissing() => WhyCannotImport("zmq", "python3-zmq");

    /// <summary>Why Debian's /usr/bin/python3 cannot import <paramref name="module"/> (of Debian's <paramref name="package"/>), or null when it can.</summary>
    public static string? WhyCannotImport(string module, string package)
    {
        if (!File.Exists(Python))
        {
            return $"needs Debian's {package}: {Python} is not installed (.ci/run installs it with apt)";
        }

        try
        {
            using var process = Process.Start(new ProcessStartInfo(Python, ["-c", $"import {module}"])
            {
                RedirectStandardError = true,
                UseShellExecute = false,
            })!;
            var error = process.StandardError.ReadToEnd();
            process.WaitForExit();
            // The traceback's last line says why ("No module named 'zmq'"); the reason becomes part of a test's name.
            var why = error.Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).LastOrDefault() ?? $"exit code {process.ExitCode}";
            return process.ExitCode == 0 ? null : $"needs Debian's {package}: {Python} cannot import {module} ({why})";
        }
        catch (System.ComponentModel.Win32Exception ex)
        {
            return $"{Python} cannot be started: {ex.Message}";
        }
    }
}
