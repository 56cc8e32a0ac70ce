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

    public string Description => "service load run through the real ingest socket: largest N streams with no drop and alert latency < 5 s [--max N (1–5000, default 2000)] [--seconds S (30–3600, default 60)] [--budget-minutes M (1–240, default 10)] [--from N / --from64 N: skip 32 × 500 / 64 × 1000 steps below N (default 1)] [--store sqlite|postgres|both (default sqlite): the store the service writes; postgres: a private durable cluster, or the server HUMWATCH_TEST_POSTGRES names] [--appends N (0–100000, default 200): AppendAlert calls timed alone per store]";

    public int Run(string[] args)
    {
        var storeName = TakeTextOption(ref args, "--store") ?? "sqlite";
        var stores = BenchStore.For(storeName);
        if (stores is null)
        {
            Console.Error.WriteLine($"streams: --store must be sqlite, postgres or both (got '{storeName}').");
            return 2;
        }

        var options = ParseIntOptions("streams", args, ("--max", 1, 5000), ("--seconds", 30, 3600), ("--budget-minutes", 1, 240), ("--from", 1, 5000), ("--from64", 1, 5000), ("--appends", 0, 100_000));
        if (options is null)
        {
            foreach (var s in stores)
            {
                s.Dispose();
            }

            return 2;
        }

        var max = options.GetValueOrDefault("--max", 2000);
        var from = options.GetValueOrDefault("--from", 1);
        var from64 = options.GetValueOrDefault("--from64", 1);
        var seconds = options.GetValueOrDefault("--seconds", 60);
        var appends = options.GetValueOrDefault("--appends", 200);
        var budget = TimeSpan.FromMinutes(options.GetValueOrDefault("--budget-minutes", 10));
        var onset = Math.Round(seconds / 3.0);
        Console.WriteLine(F($"streams: real host (HumWatchHost.Build, default options, store/logs/inbox in a temp folder, console logs off), ingest PULL and PUB on tcp://127.0.0.1:*; {ChunkSeconds} s chunks pushed at real-time rate by 2 pusher threads (PUSH sockets) in this process; {seconds} s per step; budget {budget.TotalMinutes:F0} min{(stores.Count > 1 ? ", shared equally by the stores" : "")}"));
        Console.WriteLine(F($"payloads: pre-generated quiet rooms (20 s pool, reused with advancing index and t0); stream '{IngestLoad.TaggedStream}' carries 50 Hz at 6 µV RMS on all channels from {onset:F0} s"));
        Console.WriteLine("alert latency: from the wall time the pusher's send of the chunk holding the raising frame's last sample returned (sample index round(streamSeconds·fs) − 1, streamSeconds from the alert body) to the wall time the 'alert/load-tagged' raise arrived at a SUB socket in this process; the dispatcher stores the event before it publishes, so the store's commit is inside it");
        Console.WriteLine("dropped/accepted/rejected: IngestCounters of the host (ingest queue and per-stream queues), read about 2 s after the last send; missing = sent − accepted − rejected − dropped, floored at 0 (chunks the service never counted; a failure); CPU %: process CPU time ÷ wall time (100 % = one core; pushers and subscriber included, pusher share shown); memory: process working set and live managed heap (after a full collection) at the end of the step, host still running; each step starts after a full collection");
        Console.WriteLine("dropped by reason: IngestDropReason counts summed over streams; gen0/gen2: collections during the step (every collection counts as gen0); alloc MB/s: managed bytes allocated in the process (pushers included) ÷ wall time; GC pause s: total pause time during the step / longest single pause seen (polled every 20 ms); socket %: CPU of the ingest socket thread (receive + decode) ÷ wall time; queue peak: most chunks waiting in the ingest queue at once; buffer peak MB: most decoded-sample bytes rented at once (ingest queue + per-stream queues + in analysis)");
        Console.WriteLine("store: rows counted in the tables from a connection of the bench's own, from the host's start to the counters' reading (and to its disposal, which writes the sessions' last rows): alerts, minute_ledger_parts (each also merged into a minute_ledger row), spectrum_parts, stream_owners; rows/s over that time; stream_owners rows are upserted by every heartbeat (10 s), which this row count does not see; PostgreSQL also the server's own counts: rows written (pg_stat_database tup_inserted + tup_updated + tup_deleted of the step's database, upserts' updates included), commits (xact_commit, reads included) and WAL flushes (pg_stat_wal.wal_sync, the cluster); the probe's appends are taken out of all of these; probe: one AppendAlert of a 50 Hz raise (stream 'bench-probe', not counted in the alerts above) on the service's own HumWatchStore every second during the step, timed");
        Console.WriteLine($"load average at start: {LoadAverage()}");
        var clock = Stopwatch.StartNew();
        var results = new List<(BenchStore Store, IReadOnlyList<Step> Steps32, IReadOnlyList<Step> Steps64, double[] Appends)>();
        try
        {
            for (var i = 0; i < stores.Count; i++)
            {
                var store = stores[i];
                var share = budget / stores.Count;
                var start = clock.Elapsed;
                Console.WriteLine();
                Console.WriteLine($"=== store: {store.Name}: {store.Describe()}");
                double[] appendMs;
                try
                {
                    appendMs = appends > 0 ? store.TimeAppends(appends) : [];
                }
                catch (Exception e) when (e is InvalidOperationException or System.Data.Common.DbException)
                {
                    Console.WriteLine($"{store.Name}: the store cannot be opened: {e.Message}");
                    continue;
                }

                if (appendMs.Length > 0)
                {
                    Console.WriteLine(F($"AppendAlert alone ({appends} calls on a fresh store with the real schema, nothing else running in it, after 10 untimed): median {Median(appendMs):F2} ms, p95 {Quantile(appendMs, 0.95):F2} ms, max {appendMs.Max():F2} ms; load average {LoadAverage()}"));
                }

                var steps32 = Search("32 ch × 500 Hz", new IngestLoad(32, 500, ChunkSeconds, seconds, onset), store, Steps32x500, from, max, seconds, clock, start + (share * 0.6));
                var steps64 = Search("64 ch × 1000 Hz", new IngestLoad(64, 1000, ChunkSeconds, seconds, onset), store, Steps64x1000, from64, max, seconds, clock, start + share);
                Console.WriteLine(F($"{store.Name}: largest N held (no drop, alert latency < {MaxLatencySeconds} s): 32 ch × 500 Hz: {Held(steps32)}; 64 ch × 1000 Hz: {Held(steps64)}"));
                results.Add((store, steps32, steps64, appendMs));
            }
        }
        finally
        {
            foreach (var s in stores)
            {
                s.Dispose();
            }
        }

        if (results.Count == 2)
        {
            Compare(results[0], results[1]);
        }

        Console.WriteLine($"load average at end: {LoadAverage()}");
        return 0;
    }

    /// <summary>One step run: its result and whether it held.</summary>
    private sealed record Step(LoadResult Result, bool Held, string Load);

    /// <summary>The second store against the first (PostgreSQL against SQLite), per step both ran.</summary>
    private static void Compare(
        (BenchStore Store, IReadOnlyList<Step> Steps32, IReadOnlyList<Step> Steps64, double[] Appends) a,
        (BenchStore Store, IReadOnlyList<Step> Steps32, IReadOnlyList<Step> Steps64, double[] Appends) b)
    {
        Console.WriteLine();
        Console.WriteLine($"side by side ({b.Store.Name} − {a.Store.Name}):");
        if (a.Appends.Length > 0 && b.Appends.Length > 0)
        {
            Console.WriteLine(F($"AppendAlert alone: median {Median(a.Appends):F2} → {Median(b.Appends):F2} ms (added {Signed(Median(b.Appends) - Median(a.Appends))} ms), p95 {Quantile(a.Appends, 0.95):F2} → {Quantile(b.Appends, 0.95):F2} ms (added {Signed(Quantile(b.Appends, 0.95) - Quantile(a.Appends, 0.95))} ms)"));
        }

        Console.WriteLine($"{"shape",-16} {"N",6} {"latency s",17} {"added s",8} {"probe p50 ms",15} {"probe p95 ms",15} {"rows/s",15} {"verdicts",15}");
        foreach (var (shape, sa, sb) in (ReadOnlySpan<(string, IReadOnlyList<Step>, IReadOnlyList<Step>)>)[("32 ch × 500 Hz", a.Steps32, b.Steps32), ("64 ch × 1000 Hz", a.Steps64, b.Steps64)])
        {
            foreach (var x in sa)
            {
                var y = sb.FirstOrDefault(s => s.Result.Streams == x.Result.Streams);
                if (y is null)
                {
                    continue;
                }

                var added = x.Result.AlertLatencySeconds is { } lx && y.Result.AlertLatencySeconds is { } ly ? Signed(ly - lx) : "-";
                Console.WriteLine(F($"{shape,-16} {x.Result.Streams,6} {$"{Latency(x.Result)} → {Latency(y.Result)}",17} {added,8} {$"{Median(x.Result.ProbeAppendMs):F1} → {Median(y.Result.ProbeAppendMs):F1}",15} {$"{Quantile(x.Result.ProbeAppendMs, 0.95):F1} → {Quantile(y.Result.ProbeAppendMs, 0.95):F1}",15} {$"{RowsPerSecond(x.Result):F1} → {RowsPerSecond(y.Result):F1}",15} {$"{Verdict(x)} → {Verdict(y)}",15}"));
            }
        }
    }

    /// <summary>A difference with its sign, two decimals; one that rounds to zero is "±0.00".</summary>
    private static string Signed(double value)
    {
        var rounded = Math.Round(value, 2);
        return rounded == 0 ? "±0.00" : F($"{(rounded > 0 ? "+" : "−")}{Math.Abs(rounded):F2}");
    }

    private static string Latency(LoadResult r) => r.AlertLatencySeconds is { } v ? F($"{v:F2}") : "none";

    private static double RowsPerSecond(LoadResult r) => r.StoreWritten.Rows / r.StoreSeconds;

    private static string Verdict(Step s) => s.Held ? "held" : "FAILED";

    private static string Held(IReadOnlyList<Step> steps) =>
        steps.LastOrDefault(s => s.Held) is { } last ? last.Result.Streams.ToString(System.Globalization.CultureInfo.InvariantCulture) : "none of the steps tried";

    private static List<Step> Search(string shape, IngestLoad load, BenchStore store, int[] steps, int from, int max, int seconds, Stopwatch clock, TimeSpan until)
    {
        Console.WriteLine();
        Console.WriteLine($"{shape}, {store.Name}:");
        Console.WriteLine($"{"N",6} {"sent",8} {"accepted",9} {"dropped",8} {"rejected",9} {"missing",8} {"latency s",10} {"CPU %",7} {"pushers %",10} {"WS MB",8} {"live heap MB",13} {"push lag s",11} {"load avg",16} {"verdict",8}  {"socket %",8} {"gen0/gen2",9} {"alloc MB/s",10} {"GC pause s",14} {"queue peak",10} {"buffer peak MB",14}  dropped by reason");
        var done = new List<Step>();
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
                r = load.Run(n, store);
            }
            catch (Exception e) when (e is InvalidOperationException or IOException or NetMQ.NetMQException or System.Data.Common.DbException)
            {
                Console.WriteLine($"{n,6} failed to run: {e.Message}");
                break;
            }

            // Chunks the service never counted at all (ingest-queue drops are not "accepted"; per-stream-queue drops are,
            // so this is a lower bound). Any is a failure.
            var missing = Math.Max(0, r.ChunksSent - r.ChunksAccepted - r.ChunksRejected - r.ChunksDropped);
            var ok = r.ChunksDropped == 0 && missing == 0 && r.AlertLatencySeconds is { } l && l < MaxLatencySeconds;
            var latency = r.AlertLatencySeconds is { } v ? F($"{v:F2}") : "no alert";
            var loadAverage = LoadAverage();
            Console.WriteLine(F($"{n,6} {r.ChunksSent,8} {r.ChunksAccepted,9} {r.ChunksDropped,8} {r.ChunksRejected,9} {missing,8} {latency,10} {r.ProcessCpuPercent,7:F0} {r.PusherCpuPercent,10:F0} {r.WorkingSetMb,8:F0} {r.ManagedHeapMb,13:F0} {r.MaxPusherLagSeconds,11:F2} {loadAverage,16} {(ok ? "held" : "FAILED"),8}  {r.SocketThreadCpuPercent,8:F0} {$"{r.Gen0Collections}/{r.Gen2Collections}",9} {r.AllocatedMbPerSecond,10:F1} {$"{r.GcPauseSeconds:F2}/{r.MaxGcPauseSeconds:F2}",14} {r.PeakIngestQueue,10} {r.PeakBufferMb,14:F0}  {r.DropReasons}"));
            Console.WriteLine(StoreLine(r));
            done.Add(new Step(r, ok, loadAverage));
            if (!ok)
            {
                break;
            }
        }

        return done;
    }

    /// <summary>The step's store figures, one indented line under its row.</summary>
    private static string StoreLine(LoadResult r)
    {
        var w = r.StoreWritten;
        var all = r.StoreWrittenWithStop;
        var text = new System.Text.StringBuilder(F($"       store: {w.Alerts} alerts, {w.LedgerParts} ledger parts ({w.LedgerRows} ledger rows), {w.SpectrumParts} spectrum parts, {w.StreamOwners} stream-owner rows in {r.StoreSeconds:F0} s = {RowsPerSecond(r):F1} rows/s"));
        if (w.Commits > 0)
        {
            text.Append(F($"; server: {w.TuplesWritten / r.StoreSeconds:F1} rows written/s, {w.Commits / r.StoreSeconds:F1} commits/s, {w.WalSyncs / r.StoreSeconds:F1} WAL flushes/s"));
        }

        text.Append(F($"; to disposal: {all.Alerts} alerts, {all.LedgerParts} ledger parts, {all.SpectrumParts} spectrum parts, {all.StreamOwners} stream-owner rows"));
        if (all.Commits > 0)
        {
            text.Append(F($", server: {all.TuplesWritten} rows written, {all.Commits} commits, {all.WalSyncs} WAL flushes"));
        }

        var probe = r.ProbeAppendMs;
        text.Append(probe.Count > 0
            ? F($"; probe AppendAlert ({probe.Count}): median {Median(probe):F1} ms, p95 {Quantile(probe, 0.95):F1} ms, max {probe.Max():F1} ms")
            : "; probe AppendAlert: none timed");
        if (r.ProbeFailures > 0)
        {
            text.Append(F($", {r.ProbeFailures} refused"));
        }

        return text.ToString();
    }
}
