using System.Collections.Concurrent;
using System.Diagnostics;
using System.Text;
using System.Text.Json;
using HumWatch.Formats.Wire;
using HumWatch.Host.Composition;
using HumWatch.Host.Configuration;
using HumWatch.Host.Ingest;
using HumWatch.Host.Publishing;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.Bench;

/// <summary>Outcome of one load step.</summary>
internal sealed record LoadResult(
    int Streams,
    long ChunksSent,
    long ChunksAccepted,
    long ChunksDropped,
    long ChunksRejected,
    double? AlertLatencySeconds,
    double ProcessCpuPercent,
    double PusherCpuPercent,
    double WorkingSetMb,
    double ManagedHeapMb,
    double MaxPusherLagSeconds,
    string DropReasons,
    int Gen2Collections,
    double GcPauseSeconds,
    double MaxGcPauseSeconds,
    int PeakIngestQueue,
    double PeakBufferMb,
    double AllocatedMbPerSecond,
    int Gen0Collections,
    double SocketThreadCpuPercent)
{
    /// <summary>Rows the service wrote from the host's start to the counters' reading (the bench's probe appends not included), and over how many seconds.</summary>
    public StoreCounts StoreWritten { get; init; }

    public double StoreSeconds { get; init; }

    /// <summary>The same from the host's start to its disposal (the stop writes the sessions' last minute rows and spectrum parts).</summary>
    public StoreCounts StoreWrittenWithStop { get; init; }

    /// <summary>Milliseconds of each probe <c>AppendAlert</c> on the service's own store during the step, one a second.</summary>
    public IReadOnlyList<double> ProbeAppendMs { get; init; } = [];

    /// <summary>Probe appends the store refused.</summary>
    public int ProbeFailures { get; init; }
}

/// <summary>
/// One load step against the real host: N simulated streams pushed through the real ingest socket at real-time rate by
/// pusher threads, one of them carrying a 50 Hz line switched on at a known time; a SUB socket times its alert.
/// </summary>
internal sealed class IngestLoad(int channels, int sampleRateHz, double chunkSeconds, int seconds, double lineOnsetSeconds)
{
    /// <summary>Id of the stream that carries the 50 Hz line.</summary>
    public const string TaggedStream = "load-tagged";

    private const int PusherThreads = 2;
    private const int PoolSeconds = 20;

    private readonly int _chunkSamples = (int)Math.Round(chunkSeconds * sampleRateHz);

    public LoadResult Run(int streams, BenchStore store)
    {
        var chunkCount = (int)Math.Round(seconds / chunkSeconds);

        // Payloads: a quiet pool shared by all background streams, and the tagged stream's own chunks.
        var quiet = Payloads(SimulatedStreams.QuietRoom("load-quiet", channels, sampleRateHz), 31, (int)Math.Round(PoolSeconds / chunkSeconds), out var layout);
        var tagged = Payloads(SimulatedStreams.QuietRoom(TaggedStream, channels, sampleRateHz, lineOnsetSeconds), 37, chunkCount, out _);
        var ids = new string[streams];
        ids[0] = TaggedStream;
        for (var s = 1; s < streams; s++)
        {
            ids[s] = $"load-{s:D4}";
        }

        // Start each step from a clean heap so the previous step's host does not count here.
        GC.Collect();
        GC.WaitForPendingFinalizers();
        GC.Collect();
        var folder = Directory.CreateTempSubdirectory("humwatch-bench-streams-");
        try
        {
            var stepStore = store.Create(folder.FullName);
            var settings = BenchHost.Settings(folder.FullName);
            foreach (var (key, value) in stepStore.Settings)
            {
                settings[key] = value;
            }

            LoadResult result;
            StoreCounts storeStart;
            using (var host = HumWatchHost.Build(new HumWatchHostSettings { Sources = SettingsSources.Isolated(settings) }))
            {
                host.StartAsync().GetAwaiter().GetResult();
                storeStart = stepStore.Count();
                var storeClock = Stopwatch.StartNew();
                try
                {
                    var ingestEndpoint = host.Services.GetServices<IHostedService>().OfType<SocketIngestService>().Single().Endpoints[0];
                    var publishEndpoint = host.Services.GetRequiredService<ZmqPublisher>().Endpoint;
                    var counters = host.Services.GetRequiredService<IngestCounters>();
                    var queue = host.Services.GetRequiredService<IngestQueue>();
                    var pool = host.Services.GetRequiredService<SampleBufferPool>();
                    using var subscriber = new AlertWatcher(publishEndpoint);
                    Thread.Sleep(500); // let the SUB connect before the tagged line can raise anything

                    var sendTicks = new long[chunkCount];
                    var process = Process.GetCurrentProcess();
                    var cpu0 = process.TotalProcessorTime;
                    var socketCpuBefore = ThreadClock.NamedThreadsSeconds("HumWatch ingest");
                    var gen2Before = GC.CollectionCount(2);
                    var gen0Before = GC.CollectionCount(0);
                    var allocatedBefore = GC.GetTotalAllocatedBytes(precise: false);
                    var pauseBefore = GC.GetTotalPauseDuration();
                    using var pauses = new PauseWatcher();
                    using var probe = new AppendProbe(host.Services.GetRequiredService<HumWatch.Host.Store.HumWatchStore>());
                    using var sampler = Environment.GetEnvironmentVariable("HUMWATCH_BENCH_ALLOC_TYPES") == "1" ? new AllocationSampler() : null;
                    var wall = Stopwatch.StartNew();
                    var startUtc = DateTimeOffset.UtcNow;
                    var startTicks = Stopwatch.GetTimestamp();
                    var pusherCpu = new double[PusherThreads];
                    var pusherLag = new double[PusherThreads];
                    var sent = new long[PusherThreads];
                    var threads = new Thread[PusherThreads];
                    using var sendingDone = new CountdownEvent(PusherThreads);
                    using var release = new ManualResetEventSlim(false);
                    for (var p = 0; p < PusherThreads; p++)
                    {
                        var pusher = p;
                        threads[p] = new Thread(() =>
                        {
                            var cpuStart = ThreadClock.NowSeconds();
                            (sent[pusher], pusherLag[pusher]) = Push(ingestEndpoint, layout, ids, pusher, quiet, tagged, sendTicks, startUtc, startTicks, chunkCount, sendingDone, release);
                            pusherCpu[pusher] = ThreadClock.NowSeconds() - cpuStart;
                        })
                        { IsBackground = true, Name = $"bench-pusher-{p}" };
                        threads[p].Start();
                    }

                    sendingDone.Wait();

                    // Let the queues drain and a late alert arrive (bounded).
                    var deadline = Stopwatch.GetTimestamp() + (Stopwatch.Frequency * 10);
                    while (Stopwatch.GetTimestamp() < deadline && subscriber.Alert is null)
                    {
                        Thread.Sleep(100);
                    }

                    Thread.Sleep(2000);
                    probe.Stop();
                    var storeNow = stepStore.Count();
                    var storeSeconds = storeClock.Elapsed.TotalSeconds;
                    process.Refresh();
                    var cpuSeconds = (process.TotalProcessorTime - cpu0).TotalSeconds;
                    var wallSeconds = wall.Elapsed.TotalSeconds;
                    if (sampler is not null)
                    {
                        foreach (var (type, mb) in sampler.Top(12))
                        {
                            Console.WriteLine(FormattableString.Invariant($"  alloc sample: {mb,8:F1} MB  {type}"));
                        }
                    }

                    var socketCpuPercent = 100 * (ThreadClock.NamedThreadsSeconds("HumWatch ingest") - socketCpuBefore) / wallSeconds;
                    var gen2 = GC.CollectionCount(2) - gen2Before;
                    var gen0 = GC.CollectionCount(0) - gen0Before;
                    var allocatedMbPerSecond = (GC.GetTotalAllocatedBytes(precise: false) - allocatedBefore) / 1048576.0 / wallSeconds;
                    var pauseSeconds = (GC.GetTotalPauseDuration() - pauseBefore).TotalSeconds;
                    var maxPause = pauses.MaxPauseSeconds;
                    long accepted = 0, dropped = 0, rejected = 0;
                    var byReason = new SortedDictionary<string, long>(StringComparer.Ordinal);
                    foreach (var c in counters.Snapshot())
                    {
                        accepted += c.Accepted;
                        dropped += c.Dropped;
                        rejected += c.RejectedTotal;
                        foreach (var (reason, count) in c.DroppedByReason)
                        {
                            byReason[reason.ToString()] = byReason.GetValueOrDefault(reason.ToString()) + count;
                        }
                    }

                    var dropReasons = byReason.Count == 0 ? "-" : string.Join(",", byReason.Select(p => $"{p.Key}={p.Value}"));

                    var liveHeapMb = GC.GetTotalMemory(forceFullCollection: true) / 1048576.0;
                    process.Refresh();
                    var workingSetMb = process.WorkingSet64 / 1048576.0;

                    // The PUSH sockets stay open until the counters are read, so nothing queued in them is lost by closing early.
                    release.Set();
                    foreach (var t in threads)
                    {
                        t.Join();
                    }

                    double? latency = null;
                    if (subscriber.Alert is { } alert)
                    {
                        // The chunk completing the evidence holds the raising frame's last sample (index streamSeconds·fs − 1).
                        var lastSample = (long)Math.Round(alert.StreamSeconds * sampleRateHz) - 1;
                        var chunk = (int)(lastSample / _chunkSamples);
                        if (chunk >= 0 && chunk < chunkCount && Volatile.Read(ref sendTicks[chunk]) != 0)
                        {
                            latency = (alert.ArrivalTicks - sendTicks[chunk]) / (double)Stopwatch.Frequency;
                        }
                    }

                    result = new LoadResult(
                        streams,
                        sent.Sum(),
                        accepted,
                        dropped,
                        rejected,
                        latency,
                        100 * cpuSeconds / wallSeconds,
                        100 * pusherCpu.Sum() / wallSeconds,
                        workingSetMb,
                        liveHeapMb,
                        pusherLag.Max(),
                        dropReasons,
                        gen2,
                        pauseSeconds,
                        maxPause,
                        queue.PeakCount,
                        pool.PeakRentedBytes / 1048576.0,
                        allocatedMbPerSecond,
                        gen0,
                        socketCpuPercent)
                    {
                        StoreWritten = (storeNow - storeStart).WithoutProbe(probe.Count, stepStore.Provider),
                        StoreSeconds = storeSeconds,
                        ProbeAppendMs = probe.Milliseconds,
                        ProbeFailures = probe.Failures,
                    };
                }
                finally
                {
                    using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(30));
                    host.StopAsync(timeout.Token).GetAwaiter().GetResult();
                }
            }

            // After disposal the service's connections are closed, so PostgreSQL has flushed their statistics too.
            Thread.Sleep(500);
            var storeEnd = stepStore.Count() - storeStart;
            return result with { StoreWrittenWithStop = storeEnd.WithoutProbe(result.ProbeAppendMs.Count, stepStore.Provider) };
        }
        finally
        {
            folder.Delete(recursive: true);
        }
    }

    /// <summary>Pushes every chunk of the streams this pusher owns (s % threads == pusher) on a real-time schedule.</summary>
    private (long Sent, double MaxLagSeconds) Push(string endpoint, Core.Signals.StreamLayout layout, string[] ids, int pusher, byte[][] quiet, byte[][] tagged, long[] sendTicks, DateTimeOffset startUtc, long startTicks, int chunkCount, CountdownEvent sendingDone, ManualResetEventSlim release)
    {
        using var push = new PushSocket();
        push.Options.Linger = TimeSpan.FromSeconds(5);
        push.Options.SendHighWatermark = 100_000;
        push.Connect(endpoint);
        long count = 0;
        double maxLag = 0;
        for (var k = 0; k < chunkCount; k++)
        {
            // Chunk k is complete (and may be sent) once its last sample exists in real time.
            var due = startTicks + (long)((k + 1) * chunkSeconds * Stopwatch.Frequency);
            var wait = due - Stopwatch.GetTimestamp();
            if (wait > 0)
            {
                Thread.Sleep(TimeSpan.FromSeconds(wait / (double)Stopwatch.Frequency));
            }
            else
            {
                maxLag = Math.Max(maxLag, -wait / (double)Stopwatch.Frequency);
            }

            var index = (long)k * _chunkSamples;
            var t0 = startUtc.AddTicks((long)Math.Round(index * (double)TimeSpan.TicksPerSecond / sampleRateHz));
            for (var s = pusher; s < ids.Length; s += PusherThreads)
            {
                var header = ChunkWireCodec.EncodeHeader(ids[s], layout, index, t0);
                var payload = s == 0 ? tagged[k] : quiet[(k + s) % quiet.Length];
                push.SendMoreFrame(header).SendFrame(payload);
                if (s == 0)
                {
                    Volatile.Write(ref sendTicks[k], Stopwatch.GetTimestamp());
                }

                count++;
            }
        }

        sendingDone.Signal();
        release.Wait(TimeSpan.FromSeconds(120));
        return (count, maxLag);
    }

    private byte[][] Payloads(Simulation.SimulatedRoom room, int seed, int count, out Core.Signals.StreamLayout layout)
    {
        var simulator = new Simulation.RoomSimulator(room, seed);
        layout = simulator.Layout;
        var buffer = new float[_chunkSamples * channels];
        var payloads = new byte[count][];
        for (var i = 0; i < count; i++)
        {
            simulator.Fill(buffer, _chunkSamples);
            payloads[i] = new byte[buffer.Length * 4];
            ChunkWireCodec.EncodeSamples(buffer, payloads[i]);
        }

        return payloads;
    }

    /// <summary>The first 50 Hz "raised" alert of the tagged stream, with the Stopwatch time it arrived at the SUB socket.</summary>
    private sealed class AlertWatcher : IDisposable
    {
        private readonly CancellationTokenSource _stop = new();
        private readonly Thread _thread;
        private volatile ArrivedAlert? _alert;

        public AlertWatcher(string endpoint)
        {
            _thread = new Thread(() => Receive(endpoint)) { IsBackground = true, Name = "bench-subscriber" };
            _thread.Start();
        }

        public ArrivedAlert? Alert => _alert;

        public void Dispose()
        {
            _stop.Cancel();
            _thread.Join(TimeSpan.FromSeconds(5));
            _stop.Dispose();
        }

        private void Receive(string endpoint)
        {
            using var subscriber = new SubscriberSocket();
            subscriber.Options.Linger = TimeSpan.Zero;
            subscriber.Connect(endpoint);
            subscriber.Subscribe("alert/" + TaggedStream);
            var frames = new List<byte[]>();
            while (!_stop.IsCancellationRequested)
            {
                frames.Clear();
                if (!subscriber.TryReceiveMultipartBytes(TimeSpan.FromMilliseconds(100), ref frames, 2) || frames.Count != 2)
                {
                    continue;
                }

                var arrived = Stopwatch.GetTimestamp();
                if (_alert is not null || Encoding.UTF8.GetString(frames[0]) != "alert/" + TaggedStream)
                {
                    continue;
                }

                using var body = JsonDocument.Parse(frames[1]);
                var root = body.RootElement;
                if (root.GetProperty("event").GetString() == "raised"
                    && root.TryGetProperty("frequencyHz", out var f) && f.ValueKind == JsonValueKind.Number && Math.Abs(f.GetDouble() - 50) < 1)
                {
                    _alert = new ArrivedAlert(root.GetProperty("streamSeconds").GetDouble(), arrived);
                }
            }
        }
    }

    private sealed record ArrivedAlert(double StreamSeconds, long ArrivalTicks);

    /// <summary>
    /// Once a second, one <c>AppendAlert</c> of a probe raise on the service's own store object (its lock, connection or
    /// pool, and the load the service puts on it), timed; the stream 'bench-probe' is not one the service watches.
    /// </summary>
    private sealed class AppendProbe : IDisposable
    {
        private readonly HumWatch.Host.Store.HumWatchStore _store;
        private readonly Thread _thread;
        private readonly List<double> _milliseconds = [];
        private readonly ManualResetEventSlim _stop = new(false);

        public AppendProbe(HumWatch.Host.Store.HumWatchStore store)
        {
            _store = store;
            _thread = new Thread(Probe) { IsBackground = true, Name = "bench-append-probe" };
            _thread.Start();
        }

        /// <summary>The timed appends; read after <see cref="Stop"/>.</summary>
        public IReadOnlyList<double> Milliseconds => _milliseconds;

        public int Count => _milliseconds.Count;

        /// <summary>Probe appends the store refused (the bench goes on; the service's own writes would wait and be retried).</summary>
        public int Failures { get; private set; }

        public void Stop()
        {
            _stop.Set();
            _thread.Join();
        }

        public void Dispose()
        {
            Stop();
            _stop.Dispose();
        }

        private void Probe()
        {
            for (var n = 0; !_stop.Wait(TimeSpan.FromSeconds(1)); n++)
            {
                var started = Stopwatch.GetTimestamp();
                try
                {
                    _store.Alerts.AppendAlert(BenchStore.ProbeAlert("bench-probe", n));
                    _milliseconds.Add(Stopwatch.GetElapsedTime(started).TotalMilliseconds);
                }
                catch (Exception e) when (e is System.Data.Common.DbException or InvalidOperationException)
                {
                    Failures++;
                }
            }
        }
    }

    /// <summary>Longest single GC pause seen while it lives: polls the last collection's pause every 20 ms on its own thread.</summary>
    private sealed class PauseWatcher : IDisposable
    {
        private readonly Thread _thread;
        private volatile bool _stop;
        private long _maxPauseTicks;

        public PauseWatcher()
        {
            _thread = new Thread(Watch) { IsBackground = true, Name = "bench-gc-pauses" };
            _thread.Start();
        }

        public double MaxPauseSeconds => TimeSpan.FromTicks(Interlocked.Read(ref _maxPauseTicks)).TotalSeconds;

        public void Dispose()
        {
            _stop = true;
            _thread.Join();
        }

        private void Watch()
        {
            while (!_stop)
            {
                foreach (var kind in (ReadOnlySpan<GCKind>)[GCKind.Ephemeral, GCKind.FullBlocking, GCKind.Background])
                {
                    var info = GC.GetGCMemoryInfo(kind);
                    foreach (var pause in info.PauseDurations)
                    {
                        if (pause.Ticks > Interlocked.Read(ref _maxPauseTicks))
                        {
                            Interlocked.Exchange(ref _maxPauseTicks, pause.Ticks);
                        }
                    }
                }

                Thread.Sleep(20);
            }
        }
    }
}
