using HumWatch.Core.Analysis;
using HumWatch.Core.Signals;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Core.Tests.Analysis;

public sealed class WholeFrameAllocationTests
{
    private const int SampleRateHz = 500;
    private const int Channels = 32;
    private const int ChunkSamples = SampleRateHz / 2;

    [Fact]
    public void Whole_frame_allocates_nothing_in_steady_state_with_the_default_kernel()
    {
        // Mains with harmonics on every channel and a display line on some: every stage (faults, Welch, line finder,
        // combiner, attribution) has work to do in each frame.
        var montage = SimulatedRoom.Montage(Channels);
        var room = new SimulatedRoom
        {
            Name = "alloc-room",
            SampleRateHz = SampleRateHz,
            Channels = montage,
            Tones =
            [
                new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = 4, HarmonicAmplitudes = [0.3, 0.5], WanderHz = 0.03 },
                new SimulatedTone { Name = "monitor", FrequencyHz = 75, AmplitudeUvRms = 2, Channels = [montage[0].Label, montage[1].Label, montage[2].Label] },
            ],
        };
        var simulator = new RoomSimulator(room, 17);
        var chunks = new SampleChunk[240]; // 120 s in 0.5 s chunks, built before anything is measured
        for (var i = 0; i < chunks.Length; i++)
        {
            chunks[i] = simulator.Next(ChunkSamples);
        }

        var analyzer = new StreamAnalyzer(simulator.Layout, new AnalysisOptions());
        var sink = new CountingSink();
        var sawLines = false;
        sink.OnEachFrame = frame => sawLines |= frame.LineCount > 0;

        // Warm-up: the first minute fills the span and lets every lazily built table and the JIT settle.
        for (var i = 0; i < 120; i++)
        {
            analyzer.Append(chunks[i], sink);
        }

        sink.OnEachFrame = null;
        var framesBefore = sink.Frames;
        var before = GC.GetAllocatedBytesForCurrentThread();
        for (var i = 120; i < chunks.Length; i++)
        {
            analyzer.Append(chunks[i], sink);
        }

        var allocated = GC.GetAllocatedBytesForCurrentThread() - before;
        var frames = sink.Frames - framesBefore;

        Assert.True(sawLines, "the warm-up frames found no line; the test would not exercise the line stages");
        Assert.Equal(30, frames);
        Assert.True(allocated == 0, $"{allocated} bytes allocated over {frames} frames ({allocated / (double)frames:F1} B/frame) in steady state");
    }

    private sealed class CountingSink : IAnalysisFrameSink
    {
        public int Frames { get; private set; }

        public Action<AnalysisFrame>? OnEachFrame { get; set; }

        public void OnFrame(AnalysisFrame frame)
        {
            Frames++;
            OnEachFrame?.Invoke(frame);
        }
    }
}
