using System.CommandLine;
using System.Text.Json;
using HumWatch.Cli.Demo;
using HumWatch.Host.Composition;
using HumWatch.Host.Configuration;
using HumWatch.Host.Ingest;
using HumWatch.Simulation;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using NetMQ.Sockets;

namespace HumWatch.Cli.Commands;

/// <summary>`humwatch demo`: the service on embedded defaults plus simulated rooms streamed over the real socket.</summary>
internal static class DemoCommand
{
    public static Command Create()
    {
        var speed = new Option<double>("--speed") { Description = "Plays the rooms this many times faster than real time (0.1–1000).", DefaultValueFactory = _ => 1 };
        var scenarios = new Option<string?>("--scenarios") { Description = "Folder of room scenarios (default: the demo-streams folder shipped with HumWatch)." };
        var data = new Option<string>("--data") { Description = CommandSettings.DataDescription + " Default: humwatch-data.", DefaultValueFactory = _ => "humwatch-data" };
        var seconds = new Option<double?>("--seconds") { Description = "Stops by itself after this many wall-clock seconds." };
        var start = new Option<DateTimeOffset?>("--start") { Description = "UTC time of the rooms' first sample, e.g. 2026-12-01T00:00:00Z to replay a whole day fast (default: now)." };
        var settings = new SettingsArguments();
        var command = settings.AddTo(new Command("demo", "Runs the service with simulated recording rooms streaming to it, and prints each alert as it is raised and cleared.")
        {
            speed,
            scenarios,
            data,
            seconds,
            start,
        });
        command.SetAction(parse => Run(
            parse.GetValue(speed),
            parse.GetValue(scenarios),
            parse.GetValue(data)!,
            parse.GetValue(seconds),
            parse.GetValue(start),
            settings.ConfigFiles(parse),
            settings.Settings(parse)));
        return command;
    }

    private static int Run(double speed, string? scenarioFolder, string dataFolder, double? stopAfterSeconds, DateTimeOffset? start, string[] configFiles, string[] settings)
    {
        if (!(speed >= 0.1 && speed <= 1000))
        {
            Console.Error.WriteLine($"humwatch demo: --speed must be between 0.1 and 1000 (got {speed}).");
            return ExitCodes.BadInput;
        }

        if (stopAfterSeconds is { } stop && !(stop > 0))
        {
            Console.Error.WriteLine($"humwatch demo: --seconds must be positive (got {stop}).");
            return ExitCodes.BadInput;
        }

        var folder = scenarioFolder ?? DefaultScenarioFolder();
        if (!Directory.Exists(folder))
        {
            Console.Error.WriteLine($"humwatch demo: scenario folder '{folder}' not found (use --scenarios).");
            return ExitCodes.BadInput;
        }

        var startUtc = (start ?? DateTimeOffset.UtcNow).ToUniversalTime();
        var rooms = new List<(string StreamId, RoomSimulator Simulator)>();
        foreach (var file in Directory.EnumerateFiles(folder, "*.json").Order(StringComparer.Ordinal))
        {
            try
            {
                var scenario = SimulationScenario.FromJson(File.ReadAllText(file));
                scenario.StartUtc ??= startUtc;
                for (var i = 0; i < scenario.Rooms.Count; i++)
                {
                    rooms.Add((scenario.Rooms[i].Name, scenario.CreateRoom(i)));
                }
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or JsonException or ArgumentException)
            {
                Console.Error.WriteLine($"humwatch demo: {file}: {ex.Message}");
                return ExitCodes.BadInput;
            }
        }

        if (rooms.Count == 0)
        {
            Console.Error.WriteLine($"humwatch demo: no scenario (*.json) in '{folder}'.");
            return ExitCodes.BadInput;
        }

        // The demo prints alerts itself (alerts are logged as warnings); the console log keeps to errors, the files get everything.
        var quietConsole = new Dictionary<string, string?> { ["Logs:ConsoleLevel"] = "Error" };
        if (CommandSettings.TrySources("demo", configFiles, settings, Console.Error, dataFolder, before: quietConsole) is not { } sources)
        {
            return ExitCodes.BadInput;
        }

        var hostSettings = new HumWatchHostSettings { Sources = sources };

        using var stopPrinting = new CancellationTokenSource();
        Thread? printer = null;
        DemoRoomPlayer? player = null;
        var code = ServiceRunner.Run("demo", hostSettings, host =>
        {
            // The endpoints as bound, so an ephemeral port (tcp://127.0.0.1:*) in the settings works for the demo too.
            var (publishEndpoint, ingest) = HumWatchHost.Endpoints(host);
            var ingestEndpoint = ingest.Count > 0 ? ingest[0] : IngestOptions.DefaultAddress;
            player = new DemoRoomPlayer(rooms, ConnectAddress(ingestEndpoint), speed, TimeProvider.System);
            player.StartAsync(CancellationToken.None).GetAwaiter().GetResult();
            var lifetime = host.Services.GetRequiredService<IHostApplicationLifetime>();
            lifetime.ApplicationStopping.Register(() => player.StopAsync(CancellationToken.None).Wait(TimeSpan.FromSeconds(2)));
            var names = string.Join(", ", rooms.Select(r => r.StreamId));
            Console.Out.WriteLine($"HumWatch demo: {rooms.Count} simulated rooms ({names}) streaming to {ingestEndpoint} at {speed:0.##}× real time.");
            Console.Out.WriteLine($"Alerts are published on {publishEndpoint} (try 'humwatch listen' in another terminal); store, logs and inbox in {Path.GetFullPath(dataFolder)}.");
            if (HumWatchHost.WebAddress(host) is { } page)
            {
                Console.Out.WriteLine($"Live page: {page} (open it in a browser; every room at a glance, click a room for its spectrum).");
            }

            Console.Out.WriteLine("Each room needs one analysis span (8 s) before its first frame; alerts follow a few frames after a source switches on. Ctrl-C stops.");
            Console.Out.WriteLine();
            printer = new Thread(() => PrintAlerts(ConnectAddress(publishEndpoint), stopPrinting.Token)) { IsBackground = true, Name = "humwatch-demo-printer" };
            printer.Start();
            if (stopAfterSeconds is { } after)
            {
                _ = Task.Delay(TimeSpan.FromSeconds(after)).ContinueWith(_ => lifetime.StopApplication(), TaskScheduler.Default);
            }
        },
        onStopped: () =>
        {
            // The printer's socket must close before NetMQ's context is cleaned up.
            stopPrinting.Cancel();
            printer?.Join(TimeSpan.FromSeconds(2));
            player?.Dispose();
        });
        return code;
    }

    private static void PrintAlerts(string endpoint, CancellationToken token)
    {
        using var subscriber = new SubscriberSocket();
        subscriber.Options.Linger = TimeSpan.Zero;
        subscriber.Connect(endpoint);
        subscriber.SubscribeToAnyTopic();
        ListenCommand.Pump(subscriber, StatusLines.FirstPerStream, raw: false, Console.Out, token);
    }

    /// <summary>An address to connect to for an endpoint bound on every interface (<c>*</c> or 0.0.0.0): this machine's loopback.</summary>
    private static string ConnectAddress(string endpoint) =>
        endpoint.Replace("://*:", "://127.0.0.1:", StringComparison.Ordinal).Replace("://0.0.0.0:", "://127.0.0.1:", StringComparison.Ordinal);

    private static string DefaultScenarioFolder()
    {
        var besideExecutable = Path.Combine(AppContext.BaseDirectory, "demo-streams");
        return Directory.Exists(besideExecutable) ? besideExecutable : "demo-streams";
    }
}
