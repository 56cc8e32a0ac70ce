using System.Diagnostics;
using System.Text.Json;

namespace HumWatch.Host.Tests.Web.Support;

/// <summary>Debian's python3-prometheus-client as an outside reader of the /metrics text (tests/fixtures/prometheus/parse_metrics.py).</summary>
internal static class PrometheusParser
{
    public const string Python = "/usr/bin/python3";

    private static readonly Lazy<string?> MissingReason = new(FindMissing);

    /// <summary>Why the parser cannot run here, or null.</summary>
    public static string? WhyUnavailable => MissingReason.Value;

    /// <summary>The parsed samples: (name, labels, value).</summary>
    public static async Task<IReadOnlyList<(string Name, IReadOnlyDictionary<string, string> Labels, double Value)>> ParseAsync(string text)
    {
        var info = new ProcessStartInfo(Python) { RedirectStandardInput = true, RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        info.ArgumentList.Add(Path.Combine(AppContext.BaseDirectory, "fixtures", "prometheus", "parse_metrics.py"));
        using var process = Process.Start(info) ?? throw new InvalidOperationException($"Could not start {Python}.");
        await process.StandardInput.WriteAsync(text);
        process.StandardInput.Close();
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(60));
        await process.WaitForExitAsync(timeout.Token);
        if (process.ExitCode != 0)
        {
            throw new InvalidDataException($"prometheus_client refused the text: {await error}{Environment.NewLine}{text}");
        }

        using var document = JsonDocument.Parse(await output);
        var samples = new List<(string, IReadOnlyDictionary<string, string>, double)>();
        foreach (var sample in document.RootElement.GetProperty("samples").EnumerateArray())
        {
            var labels = sample[1].EnumerateObject().ToDictionary(p => p.Name, p => p.Value.GetString() ?? "");
            samples.Add((sample[0].GetString()!, labels, sample[2].GetDouble()));
        }

        return samples;
    }

    private static string? FindMissing()
    {
        if (!File.Exists(Python))
        {
            return $"needs Debian's python3-prometheus-client: {Python} is not installed (.ci/run installs it with apt)";
        }

        var info = new ProcessStartInfo(Python, ["-c", "import prometheus_client.parser"]) { RedirectStandardError = true, UseShellExecute = false };
        using var process = Process.Start(info)!;
        process.WaitForExit(30_000);
        return process.ExitCode == 0 ? null : "needs Debian's python3-prometheus-client (apt-get install python3-prometheus-client; .ci/run does)";
    }
}
