using HumWatch.Core.Analysis;
using static HumWatch.Bench.BenchMath;

namespace HumWatch.Bench;

/// <summary>
/// Where a StreamAnalyzer allocates: feeds one contaminated stream chunk by chunk and prints every chunk after the first
/// span that allocated on the thread, with the frames it completed and the stream time.
/// </summary>
internal sealed class FrameAllocSection : IBenchmarkSection
{
    public string Name => "frame-alloc";

    public string Description => "chunks of one StreamAnalyzer that allocate (after the first span) [--channels N (1–512, default 32)] [--rate HZ (50–8192, default 500)] [--seconds S (10–3600, default 300)]";

    public int Run(string[] args)
    {
        var options = ParseIntOptions("frame-alloc", args, ("--channels", 1, 512), ("--rate", 50, 8192), ("--seconds", 10, 3600));
        if (options is null)
        {
            return 2;
        }

        var channels = options.GetValueOrDefault("--channels", 32);
        var rate = options.GetValueOrDefault("--rate", 500);
        var seconds = options.GetValueOrDefault("--seconds", 300);
        var chunkSamples = rate / 2;
        var room = SimulatedStreams.ContaminatedRoom("alloc", channels, rate);
        var chunks = SimulatedStreams.Pregenerate(room, 11, chunkSamples, seconds * 2, seconds * 2);
        var analyzer = new StreamAnalyzer(chunks[0].Layout, new AnalysisOptions());
        var sink = new Sink();
        Console.WriteLine(F($"frame-alloc: {channels} ch × {rate} Hz, {seconds} s of distinct simulated data in 0.5 s chunks; chunks after the first 8 s span that allocated:"));
        long total = 0;
        for (var i = 0; i < chunks.Length; i++)
        {
            var frames = sink.Frames;
            var before = GC.GetAllocatedBytesForCurrentThread();
            analyzer.Append(chunks[i], sink);
            var bytes = GC.GetAllocatedBytesForCurrentThread() - before;
            if (bytes > 0 && chunks[i].EndSampleIndex > 8 * rate)
            {
                total += bytes;
                Console.WriteLine(F($"  chunk {i} (stream {chunks[i].FirstSampleIndex / (double)rate:F1}–{chunks[i].EndSampleIndex / (double)rate:F1} s): {bytes} B, frames completed {sink.Frames - frames}, lines in last frame {sink.Lines}, faults {sink.Faults}"));
            }
        }

        Console.WriteLine(F($"total after the first span: {total} B over {sink.Frames} frames"));
        return 0;
    }

    private sealed class Sink : IAnalysisFrameSink
    {
        public int Frames { get; private set; }

        public int Lines { get; private set; }

        public int Faults { get; private set; }

        public void OnFrame(AnalysisFrame frame)
        {
            Frames++;
            Lines = frame.LineCount;
            Faults = frame.FaultCount;
        }
    }
}
