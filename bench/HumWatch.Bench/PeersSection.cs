using System.Diagnostics;
using System.Net.Sockets;
using System.Text;
using HumWatch.Core.Signals;
using HumWatch.Formats.Wire;
using HumWatch.Host.Composition;
using HumWatch.Host.Configuration;
using HumWatch.Host.Ingest;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using NetMQ;
using NetMQ.Sockets;
using static HumWatch.Bench.BenchMath;

namespace HumWatch.Bench;

/// <summary>
/// Hostile peers against the real host (default settings) for a minute: good rooms at real-time rate, while flood
/// threads send new stream ids, broken frames, oversized headers and shapes, a stream far past its declared rate,
/// and silent connections sit open. Prints working set before/after, counts by reason and log lines written.
/// </summary>
internal sealed class PeersSection : IBenchmarkSection
{
    private const int GoodRooms = 10;
    private const int GoodChannels = 32;
    private const int GoodRateHz = 500;
    private const double ChunkSeconds = 0.5;
    private const int SilentConnections = 1000;
    private const int FloodThreads = 2;

    public string Name => "peers";

    public string Description => "hostile peers against the real host: floods of new ids and broken frames, a stream past its rate, silent connections, beside good rooms [--seconds S (10–3600, default 60)]";

    public int Run(string[] args)
    {
        var options = ParseIntOptions("peers", args, ("--seconds", 10, 3600));
        if (options is null)
        {
            return 2;
        }

        var seconds = options.GetValueOrDefault("--seconds", 60);
        Console.WriteLine(F($"peers: real host (HumWatchHost.Build, default settings, store/logs/inbox in a temp folder, console logs off), ingest PULL on tcp://127.0.0.1:*; {GoodRooms} good rooms of {GoodChannels} ch × {GoodRateHz} Hz in {ChunkSeconds} s chunks at real time; {FloodThreads} flood threads (seeded) as fast as they go; {SilentConnections} silent TCP connections and 1 silent ZeroMQ PUSH; {seconds} s"));
        var folder = Directory.CreateTempSubdirectory("humwatch-bench-peers-");
        try
        {
            return Run(seconds, folder.FullName);
        }
        finally
        {
            folder.Delete(recursive: true);
        }
    }

    private static int Run(int seconds, string folder)
    {
        var logs = Path.Combine(folder, "logs");
        using var host = HumWatchHost.Build(new HumWatchHostSettings
        {
            Sources = SettingsSources.Isolated(BenchHost.Settings(folder)),
        });
        host.StartAsync().GetAwaiter().GetResult();
        var ingest = host.Services.GetServices<IHostedService>().OfType<SocketIngestService>().Single();
        var endpoint = ingest.Endpoints[0];
        var counters = host.Services.GetRequiredService<IngestCounters>();
        var pool = host.Services.GetRequiredService<SampleBufferPool>();
        var port = int.Parse(endpoint[(endpoint.LastIndexOf(':') + 1)..], System.Globalization.CultureInfo.InvariantCulture);

        var before = WorkingSetMiB();
        Console.WriteLine(F($"working set after start: {before:F1} MiB (managed heap {HeapMiB():F1} MiB)"));

        var silent = new List<TcpClient>(SilentConnections);
        for (var i = 0; i < SilentConnections; i++)
        {
            var client = new TcpClient();
            client.Connect("127.0.0.1", port);
            silent.Add(client);
        }

        using var silentZmq = new PushSocket();
        silentZmq.Connect(endpoint);
        Thread.Sleep(1000);
        var withSilent = WorkingSetMiB();
        Console.WriteLine(F($"working set with {SilentConnections} silent TCP connections open: {withSilent:F1} MiB ({(withSilent - before) * 1024 / SilentConnections:F1} KiB each)"));

        using var stop = new CancellationTokenSource(TimeSpan.FromSeconds(seconds));
        var sentByKind = new long[FloodThreads, Kinds.Length];
        var goodSent = 0L;
        var peak = before;
        var threads = new List<Thread>
        {
            new(() => goodSent = SendGood(endpoint, stop.Token)) { IsBackground = true, Name = "bench-good" },
        };
        for (var t = 0; t < FloodThreads; t++)
        {
            var thread = t;
            threads.Add(new Thread(() => Flood(endpoint, 1313 + thread, thread, sentByKind, stop.Token)) { IsBackground = true, Name = $"bench-flood-{t}" });
        }

        var watch = Stopwatch.StartNew();
        foreach (var thread in threads)
        {
            thread.Start();
        }

        while (!stop.IsCancellationRequested)
        {
            Thread.Sleep(1000);
            peak = Math.Max(peak, WorkingSetMiB());
        }

        foreach (var thread in threads)
        {
            thread.Join();
        }

        var floodSeconds = watch.Elapsed.TotalSeconds;
        Thread.Sleep(3000); // let the queues drain
        GC.Collect();
        GC.WaitForPendingFinalizers();
        GC.Collect();
        var after = WorkingSetMiB();

        var snapshot = counters.Snapshot();
        var origins = counters.UnattributedRejections();
        var good = snapshot.Where(s => s.StreamId.StartsWith("good-", StringComparison.Ordinal)).ToList();
        var floodSent = 0L;
        Console.WriteLine("sent by kind:");
        for (var k = 0; k < Kinds.Length; k++)
        {
            long n = 0;
            for (var t = 0; t < FloodThreads; t++)
            {
                n += sentByKind[t, k];
            }

            floodSent += n;
            Console.WriteLine(F($"  {Kinds[k],-22} {n,10}"));
        }

        Console.WriteLine(F($"flood: {floodSent} messages in {floodSeconds:F0} s ({floodSent / floodSeconds:F0}/s); good rooms: {goodSent} chunks"));
        Console.WriteLine(F($"good rooms: accepted {good.Sum(s => s.Accepted)}, dropped {good.Sum(s => s.Dropped)}, rejected {good.Sum(s => s.RejectedTotal)}"));
        var accepted = snapshot.Sum(s => s.Accepted);
        Console.WriteLine(F($"all streams counted now: {snapshot.Count} (accepted {accepted}); admitted by the ingest now: {ingest.AdmittedStreamCount}; layouts remembered: {ingest.RememberedLayoutCount}; counted streams never accepted: {counters.RejectedOnlyStreamCount}"));
        foreach (var reason in Enum.GetValues<WireRejectReason>())
        {
            var n = snapshot.Sum(s => s.RejectedFor(reason)) + origins.Sum(o => o.RejectedFor(reason));
            if (n > 0)
            {
                Console.WriteLine(F($"  rejected {reason,-18} {n,10}"));
            }
        }

        foreach (var reason in Enum.GetValues<IngestDropReason>())
        {
            var n = snapshot.Sum(s => s.DroppedFor(reason)) + origins.Sum(o => o.DroppedFor(reason));
            if (n > 0)
            {
                Console.WriteLine(F($"  dropped  {reason,-18} {n,10}"));
            }
        }

        Console.WriteLine(F($"sample buffers rented now: {pool.RentedCount} ({pool.RentedBytes / 1048576.0:F1} MiB), peak {pool.PeakRentedBytes / 1048576.0:F1} MiB; warnings held back by the throttle: {ingest.SuppressedWarnings}"));
        Console.WriteLine(F($"working set: before {before:F1} MiB, peak {peak:F1} MiB, after (full collection) {after:F1} MiB; managed heap after {HeapMiB():F1} MiB"));

        foreach (var client in silent)
        {
            client.Dispose();
        }

        host.StopAsync().GetAwaiter().GetResult();
        var (lines, warnings, summaries) = CountLogLines(logs);
        Console.WriteLine(F($"log lines written (text log): {lines}, of them ingest warnings (1102/1103) {warnings}, summary lines (1320) {summaries}"));
        return good.Sum(s => s.Dropped) == 0 ? 0 : 1;
    }

    private static readonly string[] Kinds = ["new stream id", "random bytes", "header over limit", "too many channels", "rate over limit", "bad unit", "one frame", "past declared rate"];

    private static long SendGood(string endpoint, CancellationToken stop)
    {
        using var push = new PushSocket();
        push.Options.SendHighWatermark = 0;
        push.Connect(endpoint);
        var layout = new StreamLayout(GoodRateHz, [.. Enumerable.Range(0, GoodChannels).Select(c => new ChannelInfo($"E{c}"))]);
        var samplesPerChunk = (int)(GoodRateHz * ChunkSeconds);
        var random = new Random(7);
        var data = new float[GoodChannels * samplesPerChunk];
        for (var i = 0; i < data.Length; i++)
        {
            data[i] = (float)((random.NextDouble() - 0.5) * 20);
        }

        var samples = new byte[data.Length * 4];
        ChunkWireCodec.EncodeSamples(data, samples);
        var sent = 0L;
        var watch = Stopwatch.StartNew();
        for (var k = 0; !stop.IsCancellationRequested; k++)
        {
            for (var r = 0; r < GoodRooms; r++)
            {
                push.SendMoreFrame(ChunkWireCodec.EncodeHeader($"good-{r}", layout, (long)k * samplesPerChunk, null)).SendFrame(samples);
                sent++;
            }

            var due = TimeSpan.FromSeconds((k + 1) * ChunkSeconds) - watch.Elapsed;
            if (due > TimeSpan.Zero)
            {
                stop.WaitHandle.WaitOne(due);
            }
        }

        return sent;
    }

    private static void Flood(string endpoint, int seed, int thread, long[,] sentByKind, CancellationToken stop)
    {
        using var push = new PushSocket();
        push.Options.SendHighWatermark = 1000;
        push.Connect(endpoint);
        var random = new Random(seed);
        var noise = new byte[256];
        var oneSample = new byte[4];
        var bigHeader = Encoding.UTF8.GetBytes("{\"v\":1,\"stream\":\"big\"," + new string(' ', 70_000) + "}");
        var manyChannels = Encoding.UTF8.GetBytes(Header($"wide-{thread}", 250, 300, "uV"));
        var manyChannelsSamples = new byte[300 * 4];
        var fast = Encoding.UTF8.GetBytes(Header($"fast-{thread}", 250, 1, "uV"));
        var fastSamples = new byte[250 * 4];
        var timeout = TimeSpan.FromMilliseconds(100);
        for (long i = 0; !stop.IsCancellationRequested; i++)
        {
            var kind = random.Next(Kinds.Length);
            var ok = kind switch
            {
                0 => push.TrySendFrame(timeout, Encoding.UTF8.GetBytes(Header($"id-{thread}-{i}", 250, 1, "uV")), more: true) && push.TrySendFrame(timeout, oneSample),
                1 => SendNoise(push, random, noise, timeout),
                2 => push.TrySendFrame(timeout, bigHeader, more: true) && push.TrySendFrame(timeout, oneSample),
                3 => push.TrySendFrame(timeout, manyChannels, more: true) && push.TrySendFrame(timeout, manyChannelsSamples),
                4 => push.TrySendFrame(timeout, Encoding.UTF8.GetBytes(Header($"hf-{thread}-{i}", 500_000, 1, "uV")), more: true) && push.TrySendFrame(timeout, oneSample),
                5 => push.TrySendFrame(timeout, Encoding.UTF8.GetBytes(Header($"bu-{thread}-{i}", 250, 1, "furlong")), more: true) && push.TrySendFrame(timeout, oneSample),
                6 => push.TrySendFrame(timeout, Encoding.UTF8.GetBytes(Header($"of-{thread}-{i}", 250, 1, "uV"))),
                _ => push.TrySendFrame(timeout, fast, more: true) && push.TrySendFrame(timeout, fastSamples),
            };
            if (ok)
            {
                sentByKind[thread, kind]++;
            }
        }
    }

    private static bool SendNoise(PushSocket push, Random random, byte[] noise, TimeSpan timeout)
    {
        random.NextBytes(noise);
        noise[0] = (byte)'#';
        return push.TrySendFrame(timeout, noise, more: true) && push.TrySendFrame(timeout, noise.AsSpan(0, 1 + random.Next(64)).ToArray());
    }

    private static string Header(string id, double rateHz, int channels, string unit)
    {
        var labels = string.Join(",", Enumerable.Range(0, channels).Select(c => $"\"E{c}\""));
        return "{\"v\":1,\"stream\":\"" + id + "\",\"fs\":" + rateHz.ToString(System.Globalization.CultureInfo.InvariantCulture)
            + ",\"channels\":[" + labels + "],\"unit\":\"" + unit + "\",\"index\":0}";
    }

    private static (long Lines, long Warnings, long Summaries) CountLogLines(string folder)
    {
        long lines = 0, warnings = 0, summaries = 0;
        foreach (var file in Directory.EnumerateFiles(folder, "*", SearchOption.AllDirectories).Where(f => !f.EndsWith(".json", StringComparison.Ordinal) && !f.EndsWith(".clef", StringComparison.Ordinal)))
        {
            foreach (var line in File.ReadLines(file))
            {
                lines++;
                if (line.Contains("Rejected message on", StringComparison.Ordinal) || line.Contains("Dropped a chunk of stream", StringComparison.Ordinal))
                {
                    warnings++;
                }

                if (line.Contains("ingest warnings not logged", StringComparison.Ordinal))
                {
                    summaries++;
                }
            }
        }

        return (lines, warnings, summaries);
    }

    private static double WorkingSetMiB()
    {
        using var process = Process.GetCurrentProcess();
        return process.WorkingSet64 / 1048576.0;
    }

    private static double HeapMiB() => GC.GetTotalMemory(forceFullCollection: false) / 1048576.0;
}
