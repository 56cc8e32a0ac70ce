using System.Collections.Concurrent;
using System.Diagnostics;
using System.Text;
using HumWatch.Cli.Listening;
using HumWatch.Core.Reporting;
using NetMQ;
using NetMQ.Sockets;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>
/// The console of `listen` and `demo` prints hints; the caution that reports carry with their hints is printed once per
/// session, under the first hint, and "aliased" is said in plain words the first time it appears.
/// </summary>
public sealed class ConsoleCautionTests
{
    private const string CautionLead = "caution (applies to every hint): ";

    private static readonly byte[] HintedAlert = Encoding.UTF8.GetBytes("""{"v":1,"stream":"room-1","key":"mains/h3","event":"raised","kind":"mains","source":"mains","harmonic":3,"aliased":true,"frequencyHz":150.02,"amplitudeUvRms":2.71,"channelShare":0.25,"worstChannels":["O1","O2"],"severity":"minor","suggestion":"On a few channels (O1, O2): check those electrodes' contact and impedance.","streamSeconds":12,"utc":"2026-05-04T09:00:12Z"}""");

    [Fact]
    public void A_session_prints_the_caution_under_its_first_hint_only_and_explains_aliased_once()
    {
        var session = new PrintSession();

        var first = MessagePrinter.Format("alert/room-1", HintedAlert, includeStatus: false, session)!;
        var second = MessagePrinter.Format("alert/room-1", HintedAlert, includeStatus: false, session)!;

        Assert.Contains($"{CautionLead}{SafetyNotice.Text}", first, StringComparison.Ordinal);
        Assert.True(first.IndexOf("hint:", StringComparison.Ordinal) < first.IndexOf(CautionLead, StringComparison.Ordinal), "the caution follows the hint");
        Assert.DoesNotContain(CautionLead, second, StringComparison.Ordinal);
        Assert.Contains("hint:", second, StringComparison.Ordinal);
        Assert.Contains($"mains h3, aliased ({PlainWords.Aliased})", first, StringComparison.Ordinal);
        Assert.Contains("mains h3, aliased minor", second, StringComparison.Ordinal);
    }

    [Fact]
    public void A_message_without_a_hint_does_not_use_up_the_caution()
    {
        var session = new PrintSession();
        var clear = Encoding.UTF8.GetBytes("""{"v":1,"stream":"room-1","key":"mains/h1","kind":"mains","source":"mains","harmonic":1,"aliased":false,"reason":"subsided","durationSeconds":16,"peakSeverity":"minor","lastSeverity":"minor","streamSeconds":60,"utc":"2026-05-04T09:01:00Z"}""");

        Assert.DoesNotContain(CautionLead, MessagePrinter.Format("clear/room-1", clear, includeStatus: false, session), StringComparison.Ordinal);
        Assert.Contains(CautionLead, MessagePrinter.Format("alert/room-1", HintedAlert, includeStatus: false, session), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Listen_prints_the_caution_once_for_many_hinted_alerts()
    {
        using var publisher = new PublisherSocket();
        publisher.Options.Linger = TimeSpan.Zero;
        var port = publisher.BindRandomPort("tcp://127.0.0.1");
        using var listener = new RunningCli("listen", "--endpoint", $"tcp://127.0.0.1:{port}");

        // A subscriber joins a little after it connects: publish until three alerts have been printed.
        await listener.Until(lines => lines.Count(l => l.Contains("hint:", StringComparison.Ordinal)) >= 3, () => publisher.SendMoreFrame("alert/room-1").SendFrame(HintedAlert));
        var output = listener.Lines;

        Assert.Single(output, l => l.Contains(CautionLead, StringComparison.Ordinal));
        Assert.Contains(output, l => l.EndsWith(CautionLead + SafetyNotice.Text, StringComparison.Ordinal));
        var firstHint = output.FindIndex(l => l.Contains("hint:", StringComparison.Ordinal));
        Assert.Contains(CautionLead, output[firstHint + 1], StringComparison.Ordinal);
    }

    [Fact]
    public async Task Demo_prints_hints_with_the_caution_once()
    {
        using var work = new TempFolder();
        var scenarios = Path.Combine(AppContext.BaseDirectory, "demo-streams");
        using var demo = new RunningCli(
            "demo", "--scenarios", scenarios, "--data", Path.Combine(work.Path, "data"), "--speed", "20", "--seconds", "60",
            // Ephemeral ports: the demo connects its rooms and its printer to the ports the system gave.
            "--set", "Publish:Endpoint=tcp://127.0.0.1:*", "--set", "Web:Endpoint=http://127.0.0.1:0", "--set", "Ingest:Endpoints:0:Address=tcp://127.0.0.1:*");

        // The demo rooms carry several sources each, so a few alerts come within the first simulated minutes.
        await demo.Until(lines => lines.Count(l => l.Contains("hint:", StringComparison.Ordinal)) >= 3, () => { });
        var output = demo.Lines;

        Assert.Single(output, l => l.Contains(CautionLead, StringComparison.Ordinal));
        Assert.Contains(output, l => l.EndsWith(CautionLead + SafetyNotice.Text, StringComparison.Ordinal));
        Assert.Matches(@"^Alerts are published on tcp://127\.0\.0\.1:\d+ ", Assert.Single(output, l => l.StartsWith("Alerts are published on", StringComparison.Ordinal)));

        // The page's address as bound (port 0 in the settings: the one the system gave).
        Assert.Matches(@"^Live page: http://127\.0\.0\.1:[1-9]\d*/ ", Assert.Single(output, l => l.StartsWith("Live page:", StringComparison.Ordinal)));
    }

    /// <summary>The real humwatch executable, running until disposed; its stdout collected line by line.</summary>
    private sealed class RunningCli : IDisposable
    {
        private readonly Process _process;
        private readonly ConcurrentQueue<string> _lines = new();

        public RunningCli(params string[] arguments)
        {
            var info = new ProcessStartInfo("dotnet")
            {
                RedirectStandardOutput = true,
                RedirectStandardError = true,
                UseShellExecute = false,
                StandardOutputEncoding = Encoding.UTF8,
                WorkingDirectory = AppContext.BaseDirectory,
            };
            info.ArgumentList.Add(Path.Combine(AppContext.BaseDirectory, "humwatch.dll"));
            foreach (var argument in arguments)
            {
                info.ArgumentList.Add(argument);
            }

            _process = Process.Start(info) ?? throw new InvalidOperationException("could not start humwatch");
            _process.OutputDataReceived += (_, e) =>
            {
                if (e.Data is not null)
                {
                    _lines.Enqueue(e.Data);
                }
            };
            _process.ErrorDataReceived += (_, _) => { };
            _process.BeginOutputReadLine();
            _process.BeginErrorReadLine();
        }

        public List<string> Lines => [.. _lines];

        public async Task Until(Func<List<string>, bool> condition, Action poke)
        {
            using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(90));
            while (!condition(Lines))
            {
                if (timeout.IsCancellationRequested || _process.HasExited)
                {
                    throw new TimeoutException($"humwatch {(_process.HasExited ? "exited" : "printed too little")}; stdout so far:{Environment.NewLine}{string.Join(Environment.NewLine, Lines)}");
                }

                poke();
                await Task.Delay(100);
            }
        }

        public void Dispose()
        {
            if (!_process.HasExited)
            {
                _process.Kill(entireProcessTree: true);
                _process.WaitForExit(10_000);
            }

            _process.Dispose();
        }
    }
}
