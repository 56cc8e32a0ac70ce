using System.Diagnostics;
using System.Text;
using HumWatch.Formats.Wire;
using HumWatch.Host.Composition;
using HumWatch.Host.Configuration;
using HumWatch.Host.Ingest;
using HumWatch.Simulation;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using NetMQ;
using NetMQ.Sockets;
using OpenQA.Selenium;
using OpenQA.Selenium.Chrome;
using static HumWatch.Bench.BenchMath;

namespace HumWatch.Bench;

/// <summary>
/// The live page with many rooms: the real host with N streams pushed at real time, one in ten carrying mains and a
/// display; measures /api/v1/rooms, the event stream's message rate, and in headless chromium the page's load time,
/// its message rate and how late its timers run (a busy page runs them late).
/// </summary>
internal sealed class WebSection : IBenchmarkSection
{
    private const double ChunkSeconds = 0.5;
    private const int Channels = 8;
    private const int RateHz = 250;

    public string Name => "web";

    public string Description => "live page with N rooms: API time, SSE message rate, page load in chromium [--streams N (300)] [--seconds S (30)]";

    public int Run(string[] args)
    {
        var options = ParseIntOptions(Name, args, ("--streams", 1, 2000), ("--seconds", 10, 600));
        if (options is null)
        {
            return 2;
        }

        var streams = options.GetValueOrDefault("--streams", 300);
        var seconds = options.GetValueOrDefault("--seconds", 30);
        Console.WriteLine(F($"web: real host (HumWatchHost.Build, default options, page on http://127.0.0.1:0), {streams} streams of {Channels} ch × {RateHz} Hz in {ChunkSeconds} s chunks at real time, one in ten with mains and a 75 Hz display; 25 s warm-up, then {seconds} s measured"));
        var folder = Path.Combine(Path.GetTempPath(), "humwatch-bench-web-" + Guid.NewGuid().ToString("N"));
        try
        {
            return Measure(folder, streams, seconds);
        }
        finally
        {
            NetMQConfig.Cleanup(block: false);
            try
            {
                Directory.Delete(folder, recursive: true);
            }
            catch (IOException)
            {
                // Left for the system's temp cleaning.
            }
        }
    }

    private static int Measure(string folder, int streams, int seconds)
    {
        var settings = BenchHost.Settings(folder);
        using var host = HumWatchHost.Build(new HumWatchHostSettings { Sources = SettingsSources.Isolated(settings) });
        host.Start();
        var address = HumWatchHost.WebAddress(host)!;
        var ingest = HumWatchHost.Endpoints(host).Ingest[0];
        using var stop = new CancellationTokenSource();
        var pusher = new Thread(() => Push(ingest, streams, stop.Token)) { IsBackground = true, Name = "bench-web-pusher" };
        pusher.Start();
        using var http = new HttpClient { BaseAddress = new Uri(address), Timeout = TimeSpan.FromSeconds(30) };
        try
        {
            Thread.Sleep(TimeSpan.FromSeconds(25));
            var roomsNow = http.GetStringAsync("/api/v1/rooms").GetAwaiter().GetResult();
            Console.WriteLine(F($"rooms on the board after warm-up: {CountOf(roomsNow, "{\"stream\":")} (affected: {CountOf(roomsNow, "\"state\":\"affected\"")})"));

            // The event stream as a page gets it, counted over the window, while the API is timed.
            var sse = Task.Run(() => CountEvents(http, TimeSpan.FromSeconds(seconds)));
            var times = new List<double>();
            long bytes = 0;
            var cpuBefore = Process.GetCurrentProcess().TotalProcessorTime;
            var wall = Stopwatch.StartNew();
            while (wall.Elapsed.TotalSeconds < seconds - 1)
            {
                var watch = Stopwatch.StartNew();
                var body = http.GetByteArrayAsync("/api/v1/rooms").GetAwaiter().GetResult();
                times.Add(watch.Elapsed.TotalMilliseconds);
                bytes = body.Length;
                Thread.Sleep(500);
            }

            var (frames, frameBytes, byKind) = sse.GetAwaiter().GetResult();
            var cpu = (Process.GetCurrentProcess().TotalProcessorTime - cpuBefore).TotalSeconds / wall.Elapsed.TotalSeconds * 100;
            Console.WriteLine(F($"GET /api/v1/rooms: {bytes / 1024.0:F0} KiB, median {Median(times):F1} ms, max {times.Max():F1} ms over {times.Count} requests"));
            Console.WriteLine(F($"event stream: {frames / (double)seconds:F2} messages/s, {frameBytes / 1024.0 / seconds:F1} KiB/s ({string.Join(", ", byKind.OrderBy(k => k.Key, StringComparer.Ordinal).Select(k => $"{k.Key} {k.Value}"))} in {seconds} s)"));
            Console.WriteLine(F($"process CPU {cpu:F0} % (100 % = one core; the pusher included), load average {LoadAverage()}"));
            Browse(address, streams);
        }
        finally
        {
            stop.Cancel();
            pusher.Join(TimeSpan.FromSeconds(10));
            host.StopAsync().GetAwaiter().GetResult();
        }

        return 0;
    }

    private static void Browse(string address, int streams)
    {
        const string chromium = "/usr/bin/chromium";
        const string driver = "/usr/bin/chromedriver";
        if (!File.Exists(chromium) || !File.Exists(driver))
        {
            Console.WriteLine("page: skipped (needs Debian's chromium and chromium-driver)");
            return;
        }

        Environment.SetEnvironmentVariable("SE_OFFLINE", "true");
        var profile = Directory.CreateTempSubdirectory("humwatch-bench-chromium-");
        var service = ChromeDriverService.CreateDefaultService(Path.GetDirectoryName(driver)!, Path.GetFileName(driver));
        service.SuppressInitialDiagnosticInformation = true;
        var options = new ChromeOptions { BinaryLocation = chromium };
        options.AddArguments("--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking",
            "--disable-component-update", "--disable-sync", $"--user-data-dir={profile.FullName}", "--window-size=1920,1080");
        using var browser = new ChromeDriver(service, options, TimeSpan.FromSeconds(60));
        try
        {
            var loads = new List<double>();
            var ready = new List<double>();
            for (var round = 0; round < 5; round++)
            {
                browser.Navigate().GoToUrl(address + "?round=" + round.ToString(System.Globalization.CultureInfo.InvariantCulture));
                var deadline = DateTime.UtcNow.AddSeconds(60);
                object? rendered = null;
                while (DateTime.UtcNow < deadline && (rendered = browser.ExecuteScript("return window.humwatchStats && window.humwatchStats.firstRender;")) is null)
                {
                    Thread.Sleep(50);
                }

                loads.Add(Convert.ToDouble(rendered, System.Globalization.CultureInfo.InvariantCulture));
                ready.Add(Convert.ToDouble(browser.ExecuteScript("return performance.getEntriesByType('navigation')[0].domContentLoadedEventEnd;"), System.Globalization.CultureInfo.InvariantCulture));
            }

            var tiles = Convert.ToInt32(browser.ExecuteScript("return document.querySelectorAll('#rooms > li').length;"), System.Globalization.CultureInfo.InvariantCulture);
            Console.WriteLine(F($"page load (navigation start to every room drawn from the first snapshot): median {Median(loads):F0} ms, max {loads.Max():F0} ms over {loads.Count} loads; DOMContentLoaded median {Median(ready):F0} ms; {tiles} tiles of {streams} streams"));

            // Timer lateness over 20 s: a 100 ms interval that runs late means the page's main thread is busy.
            browser.ExecuteScript("""
                window.benchLag = { max: 0, sum: 0, n: 0, messages: window.humwatchStats.messages, bytes: window.humwatchStats.bytes, t0: performance.now() };
                let last = performance.now();
                window.benchTimer = setInterval(() => { const t = performance.now(); const late = t - last - 100; last = t;
                  window.benchLag.max = Math.max(window.benchLag.max, late); window.benchLag.sum += late; window.benchLag.n++; }, 100);
                """);
            Thread.Sleep(TimeSpan.FromSeconds(20));
            var lag = (IReadOnlyDictionary<string, object>)(browser.ExecuteScript("""
                clearInterval(window.benchTimer); const l = window.benchLag; const s = (performance.now() - l.t0) / 1000;
                return { max: l.max, mean: l.sum / Math.max(1, l.n), rate: (window.humwatchStats.messages - l.messages) / s, kib: (window.humwatchStats.bytes - l.bytes) / 1024 / s };
                """) ?? throw new InvalidOperationException("The page returned no timer figures."));
            double D(string key) => Convert.ToDouble(lag[key], System.Globalization.CultureInfo.InvariantCulture);
            Console.WriteLine(F($"page over 20 s: {D("rate"):F2} messages/s, {D("kib"):F1} KiB/s received; 100 ms timer late by {D("mean"):F1} ms on average, {D("max"):F0} ms at most"));
        }
        finally
        {
            browser.Quit();
            profile.Delete(recursive: true);
        }
    }

    private static async Task<(long Frames, long Bytes, Dictionary<string, long> ByKind)> CountEvents(HttpClient http, TimeSpan window)
    {
        using var cancel = new CancellationTokenSource(window);
        var byKind = new Dictionary<string, long>(StringComparer.Ordinal);
        long frames = 0;
        long bytes = 0;
        try
        {
            using var response = await http.GetAsync("/api/v1/events", HttpCompletionOption.ResponseHeadersRead, cancel.Token);
            using var reader = new StreamReader(await response.Content.ReadAsStreamAsync(cancel.Token), Encoding.UTF8);
            while (await reader.ReadLineAsync(cancel.Token) is { } line)
            {
                bytes += line.Length + 1;
                if (line.StartsWith("event: ", StringComparison.Ordinal))
                {
                    frames++;
                    var kind = line["event: ".Length..];
                    byKind[kind] = byKind.GetValueOrDefault(kind) + 1;
                }
            }
        }
        catch (OperationCanceledException)
        {
            // The window is over.
        }

        return (frames, bytes, byKind);
    }

    private static void Push(string endpoint, int streams, CancellationToken stop)
    {
        using var push = new PushSocket();
        push.Options.Linger = TimeSpan.Zero;
        push.Options.SendHighWatermark = 100_000;
        push.Connect(endpoint.Replace("://*:", "://127.0.0.1:", StringComparison.Ordinal));
        var start = DateTimeOffset.UtcNow;
        var rooms = new RoomSimulator[streams];
        for (var i = 0; i < streams; i++)
        {
            var name = F($"room-{i:000}");
            var room = i % 10 == 0 ? SimulatedStreams.ContaminatedRoom(name, Channels, RateHz) : SimulatedStreams.QuietRoom(name, Channels, RateHz);
            rooms[i] = new RoomSimulator(room, 100 + i, start);
        }

        var clock = Stopwatch.StartNew();
        var samples = (int)(ChunkSeconds * RateHz);
        for (long k = 1; !stop.IsCancellationRequested; k++)
        {
            // Chunk k is sent once its last sample exists in real time.
            var wait = TimeSpan.FromSeconds(k * ChunkSeconds) - clock.Elapsed;
            if (wait > TimeSpan.Zero && stop.WaitHandle.WaitOne(wait))
            {
                return;
            }

            for (var i = 0; i < streams; i++)
            {
                var message = ChunkWireCodec.Encode(F($"room-{i:000}"), rooms[i].Next(samples));
                push.SendMoreFrame(message.Header).SendFrame(message.Samples);
            }
        }
    }

    private static int CountOf(string text, string what)
    {
        var count = 0;
        for (var at = text.IndexOf(what, StringComparison.Ordinal); at >= 0; at = text.IndexOf(what, at + what.Length, StringComparison.Ordinal))
        {
            count++;
        }

        return count;
    }
}
