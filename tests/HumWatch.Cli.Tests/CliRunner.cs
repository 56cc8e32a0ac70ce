using System.Diagnostics;

namespace HumWatch.Cli.Tests;

/// <summary>Runs the real humwatch executable (built next to the tests) as a separate process.</summary>
internal static class CliRunner
{
    public static Task<(int ExitCode, string Output, string Error)> RunAsync(params string[] arguments) =>
        RunInAsync(AppContext.BaseDirectory, new Dictionary<string, string>(), arguments);

    /// <summary>Runs in <paramref name="workingDirectory"/> with <paramref name="environment"/> added to the child's own environment only.</summary>
    public static async Task<(int ExitCode, string Output, string Error)> RunInAsync(string workingDirectory, IReadOnlyDictionary<string, string> environment, params string[] arguments)
    {
        var info = new ProcessStartInfo("dotnet")
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
            WorkingDirectory = workingDirectory,
        };
        foreach (var (name, value) in environment)
        {
            info.Environment[name] = value;
        }

        info.ArgumentList.Add(Path.Combine(AppContext.BaseDirectory, "humwatch.dll"));
        foreach (var argument in arguments)
        {
            info.ArgumentList.Add(argument);
        }

        using var process = Process.Start(info) ?? throw new InvalidOperationException("could not start humwatch");
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        using var timeout = new CancellationTokenSource(TimeSpan.FromMinutes(3));
        await process.WaitForExitAsync(timeout.Token);
        return (process.ExitCode, await output, await error);
    }
}

/// <summary>A fresh folder under the system temp path, deleted on dispose.</summary>
internal sealed class TempFolder : IDisposable
{
    public string Path { get; } = System.IO.Path.Combine(System.IO.Path.GetTempPath(), "humwatch-cli-" + Guid.NewGuid().ToString("N"));

    public TempFolder() => Directory.CreateDirectory(Path);

    public void Dispose()
    {
        try
        {
            Directory.Delete(Path, recursive: true);
        }
        catch (IOException)
        {
            // Best effort.
        }
    }
}
