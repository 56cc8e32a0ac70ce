using System.Diagnostics;
using static HumWatch.Bench.BenchMath;

namespace HumWatch.Bench;

/// <summary>
/// The service at scale: the real host on loopback, N simulated streams pushed through the real ingest socket at
/// real-time rate; N searched upward until a step drops a chunk, misses the 5 s alert latency, or the time budget ends.
/// </summary>
internal sealed class StreamsSection : IBenchmarkSection
{
    private const double ChunkSeconds = 0.5;
    private const double MaxLatencySeconds = 5;

    private static readonly int[] Steps32x500 = [25, 50, 100, 200, 300, 400, 600, 800, 1000, 1500, 2000];
    private static readonly int[] Steps64x1000 = [10, 25, 50, 100, 150, 200, 300, 400, 600, 800, 1000];

    public string Name => "streams";

    public string Description => "service load run through the real ingest socket: largest N streams with no drop and alert latency < 5 s [--max N (1–5000, default 2000)] [--seconds S (30–3600, default 60)] [--budget-minutes M (1–240, default 10)] [--from N / --from64 N: skip 32 × 500 / 64 × 1000 steps below N (default 1)]";

    public int Run(string[] args)
    {
        var options = ParseIntOptions("streams", args, ("--max", 1, 5000), ("--seconds", 30, 3600), ("--budget-minutes", 1, 240), ("--from", 1, 5000), ("--from64", 1, 5000));
        if (options is null)
        {
            return 2;
        }

        var max = options.GetValueOrDefault("--max", 2000);
        var from = options.GetValueOrDefault("--from", 1);
        var from64 = options.GetValueOrDefault("--from64", 1);
        var seconds = options.GetValueOrDefault("--seconds", 60);
        var budget = TimeSpan.FromMinutes(options.GetValueOrDefault("--budget-minutes", 10));
        var onset = Math.Round(seconds / 3.0);
        Console.WriteLine(F($"streams: real host (HumWatchHost.Build, default options, store/logs/inbox in a temp folder, console logs off), ingest PULL and PUB on tcp://127.0.0.1:*; {ChunkSeconds} s chunks pushed at real-time rate by 2 pusher threads (PUSH sockets) in this process; {seconds} s per step; budget {budget.TotalMinutes:F0} min"));
        Console.WriteLine(F($"payloads: pre-generated quiet rooms (20 s pool, reused with advancing index and t0); stream '{IngestLoad.TaggedStream}' carries 50 Hz at 6 µV RMS on all channels from {onset:F0} s"));
        Console.WriteLine("alert latency: from the wall time the pusher's send of the chunk holding the raising frame's last sample returned (sample index round(streamSeconds·fs) − 1, streamSeconds from the alert body) to the wall time the 'alert/load-tagged' raise arrived at a SUB socket in this process");
        Console.WriteLine("dropped/accepted/rejected: IngestCounters of the host (ingest queue and per-stream queues), read about 2 s after the last send; missing = sent − accepted − rejected − dropped, floored at 0 (chunks the service never counted; a failure); CPU %: process CPU time ÷ wall time (100 % = one core; pushers and subscriber included, pusher share shown); memory: process working set and live managed heap (after a full collection) at the end of the step, host still running; each step starts after a full collection");
        Console.WriteLine("dropped by reason: IngestDropReason counts summed over streams; gen0/gen2: collections during the step (every collection counts as gen0); alloc MB/s: managed bytes allocated in the process (pushers included) ÷ wall time; GC pause s: total pause time during the step / longest single pause seen (polled every 20 ms); socket %: CPU of the ingest socket thread (receive + decode) ÷ wall time; queue peak: most chunks waiting in the ingest queue at once; buffer peak MB: most decoded-sample bytes rented at once (ingest queue + per-stream queues + in analysis)");
        Console.WriteLine($"load average at start: {LoadAverage()}");
        var clock = Stopwatch.StartNew();
        var held32 = Search("32 ch × 500 Hz", new IngestLoad(32, 500, ChunkSeconds, seconds, onset), Steps32x500, from, max, seconds, clock, budget * 0.6);
        var held64 = Search("64 ch × 1000 Hz", new IngestLoad(64, 1000, ChunkSeconds, seconds, onset), Steps64x1000, from64, max, seconds, clock, budget);
        Console.WriteLine(F($"largest N held (no drop, alert latency < {MaxLatencySeconds} s): 32 ch × 500 Hz: {Held(held32)}; 64 ch × 1000 Hz: {Held(held64)}"));
        Console.WriteLine($"load average at end: {LoadAverage()}");
        return 0;
    }

    private static string Held(int n) => n > 0 ? n.ToString(System.Globalization.CultureInfo.InvariantCulture) : "none of the steps tried";

    private static int Search(string shape, IngestLoad load, int[] steps, int from, int max, int seconds, Stopwatch clock, TimeSpan until)
    {
        Console.WriteLine();
        Console.WriteLine($"{shape}:");
        Console.WriteLine($"{"N",6} {"sent",8} {"accepted",9} {"dropped",8} {"rejected",9} {"missing",8} {"latency s",10} {"CPU %",7} {"pushers %",10} {"WS MB",8} {"live heap MB",13} {"push lag s",11} {"load avg",16} {"verdict",8}  {"socket %",8} {"gen0/gen2",9} {"alloc MB/s",10} {"GC pause s",14} {"queue peak",10} {"buffer peak MB",14}  dropped by reason");
        var held = 0;
        foreach (var n in steps)
        {
            if (n < from)
            {
                continue;
            }

            if (n > max)
            {
                break;
            }

            // A step costs its seconds plus start, drain and stop (about 15 s).
            if (clock.Elapsed + TimeSpan.FromSeconds(seconds + 15) > until)
            {
                Console.WriteLine(F($"stopped: time budget ({until.TotalMinutes:F1} min of the section) would be exceeded by N = {n}"));
                break;
            }

            LoadResult r;
            try
            {
                r = load.Run(n);
            }
            catch (Exception e) when (e is InvalidOperationException or IOException or NetMQ.NetMQException)
            {
                Console.WriteLine($"{n,6} failed to run: {e.Message}");
                break;
            }

            // Chunks the service never counted at all (ingest-queue drops are not "accepted"; per-stream-queue drops are,
            // so this is a lower bound). Any is a failure.
            var missing = Math.Max(0, r.ChunksSent - r.ChunksAccepted - r.ChunksRejected - r.ChunksDropped);
            var ok = r.ChunksDropped == 0 && missing == 0 && r.AlertLatencySeconds is { } l && l < MaxLatencySeconds;
            var latency = r.AlertLatencySeconds is { } v ? F($"{v:F2}") : "no alert";
            Console.WriteLine(F($"{n,6} {r.ChunksSent,8} {r.ChunksAccepted,9} {r.ChunksDropped,8} {r.ChunksRejected,9} {missing,8} {latency,10} {r.ProcessCpuPercent,7:F0} {r.PusherCpuPercent,10:F0} {r.WorkingSetMb,8:F0} {r.ManagedHeapMb,13:F0} {r.MaxPusherLagSeconds,11:F2} {LoadAverage(),16} {(ok ? "held" : "FAILED"),8}  {r.SocketThreadCpuPercent,8:F0} {$"{r.Gen0Collections}/{r.Gen2Collections}",9} {r.AllocatedMbPerSecond,10:F1} {$"{r.GcPauseSeconds:F2}/{r.MaxGcPauseSeconds:F2}",14} {r.PeakIngestQueue,10} {r.PeakBufferMb,14:F0}  {r.DropReasons}"));
            if (!ok)
            {
                break;
            }

            held = n;
        }

        return held;
    }
}
