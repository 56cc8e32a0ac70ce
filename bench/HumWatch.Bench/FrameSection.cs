using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Ledger;
using HumWatch.Core.Signals;
using static HumWatch.Bench.BenchMath;

namespace HumWatch.Bench;

/// <summary>
/// The whole analysis frame (StreamAnalyzer: faults, sliding Welch, line finder, combiner, attribution) per stream-second
/// at three stream shapes, with and without AlertBook + MinuteLedger; steady-state allocation per frame and memory per stream.
/// </summary>
internal sealed class FrameSection : IBenchmarkSection
{
    private const double ChunkSeconds = 0.5;
    private const int WarmSeconds = 60;
    private const int UniqueSeconds = 60;
    private const double MinWarmWallSeconds = 3;

    private static readonly (int Channels, int SampleRateHz, int MemoryStreams)[] Shapes = [(32, 500, 16), (64, 1000, 8), (256, 2048, 2)];

    public string Name => "frame";

    public string Description => "whole analysis frame per stream-second, real-time factor, streams per core, alloc/frame, memory/stream [--rounds N (3–50, default 5)] [--seconds S per round (10–600, default 60)]";

    public int Run(string[] args)
    {
        var options = ParseIntOptions("frame", args, ("--rounds", 3, 50), ("--seconds", 10, 600));
        if (options is null)
        {
            return 2;
        }

        var rounds = options.GetValueOrDefault("--rounds", 5);
        var roundSeconds = options.GetValueOrDefault("--seconds", 60);
        var clock = ThreadClock.IsCpuTime ? "thread CPU time" : "wall time";
        Console.WriteLine(F($"frame: default AnalysisOptions (4 s Welch segments, 50 % overlap, 8 s span, 2 s hop), default kernel; {ChunkSeconds} s chunks; at least {WarmSeconds} s warm-up (and {MinWarmWallSeconds} s wall time), then {rounds} interleaved rounds of {roundSeconds} stream-seconds; medians; {clock}; one thread"));
        Console.WriteLine($"data: RoomSimulator, 50 Hz mains 4 µV RMS + harmonics 2,3 on all channels, 75 Hz display 2 µV RMS on a quarter of them; {UniqueSeconds} s generated, replayed with advancing index (generation not timed)");
        Console.WriteLine($"load average at start: {LoadAverage()}");
        Console.WriteLine();
        Console.WriteLine($"{"stream",-18} {"analysis",14} {"real-time",10} {"streams",8} {"alloc",10} {"+book+ledger",14} {"book+ledger",12} {"memory/stream",14} {"with book+ledger",17}");
        Console.WriteLine($"{"",-18} {"ms CPU/str-s",14} {"factor",10} {"per core",8} {"B/frame",10} {"ms CPU/str-s",14} {"B/frame",12} {"MB",14} {"MB",17}");
        foreach (var (channels, rate, memoryStreams) in Shapes)
        {
            RunShape(channels, rate, memoryStreams, rounds, roundSeconds);
        }

        Console.WriteLine();
        Console.WriteLine("analysis = StreamAnalyzer.Append only; +book+ledger = the same with AlertBook.Observe and MinuteLedger.Observe on every frame (separate analyser, same chunks).");
        Console.WriteLine("real-time factor = stream-seconds analysed per CPU-second; streams per core = that factor (analysis only; ingest, store and publishing excluded).");
        Console.WriteLine("alloc = GC.GetAllocatedBytesForCurrentThread over the timed rounds ÷ frames (steady state, after warm-up); book+ledger B/frame = bytes allocated inside their Observe calls ÷ frames (alert events and minute rows included).");
        Console.WriteLine($"memory/stream = GC.GetTotalMemory(forceFullCollection) delta after creating and warming N analysers ({WarmSeconds} s each), ÷ N; chunk data excluded (shared).");
        Console.WriteLine($"load average at end: {LoadAverage()}");
        return 0;
    }

    private static void RunShape(int channels, int rate, int memoryStreams, int rounds, int roundSeconds)
    {
        var chunkSamples = (int)(ChunkSeconds * rate);
        var chunksPerSecond = (int)Math.Round(1 / ChunkSeconds);
        var warmChunks = WarmSeconds * chunksPerSecond;
        var roundChunks = roundSeconds * chunksPerSecond;
        var room = SimulatedStreams.ContaminatedRoom($"bench-{channels}x{rate}", channels, rate);
        var uniqueChunks = UniqueSeconds * chunksPerSecond;
        var generated = SimulatedStreams.Pregenerate(room, 11, chunkSamples, uniqueChunks, uniqueChunks);
        var layout = generated[0].Layout;
        var plain = new StreamAnalyzer(layout, new AnalysisOptions());
        var full = new StreamAnalyzer(layout, new AnalysisOptions());
        var counter = new CountingSink();
        var bookSink = new BookLedgerSink(room.Name, rate);

        // The warm-up minute of a small stream passes in well under a second of wall time, before the runtime has
        // recompiled the per-frame methods (tiered JIT: call counting starts after a quiet 100 ms, then a background
        // compile), so the stream goes on until MinWarmWallSeconds have passed as well; the timed chunks continue it.
        var warmClock = System.Diagnostics.Stopwatch.StartNew();
        var warmed = 0;
        while (warmed < warmChunks || warmClock.Elapsed.TotalSeconds < MinWarmWallSeconds)
        {
            var chunk = Replay(generated, warmed, chunkSamples);
            plain.Append(chunk, counter);
            full.Append(chunk, bookSink);
            warmed++;
        }

        var chunks = new SampleChunk[warmed + (rounds * roundChunks)];
        for (var i = 0; i < chunks.Length; i++)
        {
            chunks[i] = Replay(generated, i, chunkSamples);
        }


        var plainMs = new double[rounds];
        var fullMs = new double[rounds];
        var roundBytes = new long[rounds];
        long plainBytes = 0;
        long plainFrames = 0;
        long bookBytes = 0;
        long bookFrames = 0;
        for (var r = 0; r < rounds; r++)
        {
            var from = warmed + (r * roundChunks);
            var frames0 = counter.Frames;

            // The clock reads a /proc file (allocates), so it brackets the allocation counter, not the other way round.
            var cpu0 = ThreadClock.NowSeconds();
            var bytes0 = GC.GetAllocatedBytesForCurrentThread();
            for (var i = from; i < from + roundChunks; i++)
            {
                plain.Append(chunks[i], counter);
            }

            roundBytes[r] = GC.GetAllocatedBytesForCurrentThread() - bytes0;
            plainBytes += roundBytes[r];
            var cpu1 = ThreadClock.NowSeconds();
            plainFrames += counter.Frames - frames0;
            plainMs[r] = (cpu1 - cpu0) * 1e3 / roundSeconds;

            var bookFrames0 = bookSink.Frames;
            var bookBytes0 = bookSink.AllocatedBytes;
            cpu0 = ThreadClock.NowSeconds();
            for (var i = from; i < from + roundChunks; i++)
            {
                full.Append(chunks[i], bookSink);
            }

            cpu1 = ThreadClock.NowSeconds();
            bookBytes += bookSink.AllocatedBytes - bookBytes0;
            bookFrames += bookSink.Frames - bookFrames0;
            fullMs[r] = (cpu1 - cpu0) * 1e3 / roundSeconds;
        }

        var analysisMs = Median(plainMs);
        var realTime = 1000 / analysisMs;
        var (memory, memoryWithBook) = MemoryPerStream(layout, room.Name, rate, chunks, warmChunks, memoryStreams);
        var name = $"{channels} ch × {rate} Hz";
        Console.WriteLine(F($"{name,-18} {analysisMs,14:F2} {realTime,9:F0}× {realTime,8:F0} {plainBytes / (double)plainFrames,10:F1} {Median(fullMs),14:F2} {bookBytes / (double)bookFrames,12:F1} {memory / 1048576.0,14:F2} {memoryWithBook / 1048576.0,17:F2}"));
        Console.WriteLine(F($"{"",-18} rounds ms CPU/str-s: analysis [{string.Join(", ", Array.ConvertAll(plainMs, v => v.ToString("F2", System.Globalization.CultureInfo.InvariantCulture)))}], +book+ledger [{string.Join(", ", Array.ConvertAll(fullMs, v => v.ToString("F2", System.Globalization.CultureInfo.InvariantCulture)))}]; analysis B per round [{string.Join(", ", roundBytes)}]; {plainFrames} frames timed; alerts raised {bookSink.Raised}, minute rows {bookSink.Rows}; memory from N = {memoryStreams}"));
    }

    // Chunk number <paramref name="index"/> of an endless replay of the generated chunks, with advancing sample index and time.
    private static SampleChunk Replay(SampleChunk[] generated, int index, int chunkSamples)
    {
        var source = generated[index % generated.Length];
        var first = (long)index * chunkSamples;
        var startUtc = SimulatedStreams.StartUtc.AddTicks((long)Math.Round(first / source.Layout.SampleRateHz * TimeSpan.TicksPerSecond));
        return source.At(first, startUtc);
    }

    private static (double Analyzer, double WithBook) MemoryPerStream(StreamLayout layout, string name, int rate, SampleChunk[] chunks, int warmChunks, int n)
    {
        var before = GC.GetTotalMemory(true);
        var analyzers = new StreamAnalyzer[n];
        var counter = new CountingSink();
        for (var s = 0; s < n; s++)
        {
            analyzers[s] = new StreamAnalyzer(layout, new AnalysisOptions());
            for (var i = 0; i < warmChunks; i++)
            {
                analyzers[s].Append(chunks[i], counter);
            }
        }

        var afterAnalyzers = GC.GetTotalMemory(true);
        var sinks = new BookLedgerSink[n];
        var moreAnalyzers = new StreamAnalyzer[n];
        for (var s = 0; s < n; s++)
        {
            moreAnalyzers[s] = new StreamAnalyzer(layout, new AnalysisOptions());
            sinks[s] = new BookLedgerSink(name, rate);
            for (var i = 0; i < warmChunks; i++)
            {
                moreAnalyzers[s].Append(chunks[i], sinks[s]);
            }
        }

        var afterFull = GC.GetTotalMemory(true);
        GC.KeepAlive(analyzers);
        GC.KeepAlive(moreAnalyzers);
        GC.KeepAlive(sinks);
        return ((afterAnalyzers - before) / (double)n, (afterFull - afterAnalyzers) / (double)n);
    }

    private sealed class CountingSink : IAnalysisFrameSink
    {
        public long Frames { get; private set; }

        public void OnFrame(AnalysisFrame frame) => Frames++;
    }

    /// <summary>What the service does with each frame in Core: alert hysteresis and the minute ledger; counts its own allocation.</summary>
    private sealed class BookLedgerSink(string streamId, int sampleRateHz) : IAnalysisFrameSink, IAlertEventSink, IMinuteRowSink
    {
        private readonly AlertBook _book = new(streamId, new AlertOptions());
        private readonly MinuteLedger _ledger = new(streamId, "bench-session");
        private readonly double _ticksPerSample = (double)TimeSpan.TicksPerSecond / sampleRateHz;

        public long Frames { get; private set; }

        public long AllocatedBytes { get; private set; }

        public long Raised { get; private set; }

        public long Rows { get; private set; }

        public void OnFrame(AnalysisFrame frame)
        {
            Frames++;
            var endUtc = SimulatedStreams.StartUtc.AddTicks((long)Math.Round(frame.EndSampleIndex * _ticksPerSample));
            var before = GC.GetAllocatedBytesForCurrentThread();
            _book.Observe(frame, endUtc, this);
            _ledger.Observe(frame, endUtc, this);
            AllocatedBytes += GC.GetAllocatedBytesForCurrentThread() - before;
        }

        public void OnAlertEvent(AlertEvent alertEvent)
        {
            if (alertEvent is AlertRaised)
            {
                Raised++;
            }
        }

        public void OnMinuteRow(MinuteRow row) => Rows++;
    }
}
