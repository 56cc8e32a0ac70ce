using HumWatch.Core.Analysis;
using HumWatch.Core.Faults;
using HumWatch.Core.Signals;
using HumWatch.Core.Tests.Scenarios;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Core.Tests.Analysis;

public sealed class StreamAnalyzerTests
{
    private static readonly DateTimeOffset Start = new(2026, 3, 14, 9, 0, 0, TimeSpan.Zero);

    [Fact]
    public void Invalid_options_are_listed_in_one_argument_exception()
    {
        var options = new AnalysisOptions();
        options.Lines.MinProminenceDb = 1;
        options.Spectra.HopSeconds = 3;

        var error = Assert.Throws<ArgumentException>(() => new StreamAnalyzer(Layout(250, 2), options));

        // Core names the settings by their place in AnalysisOptions; only the Host knows the configuration section.
        Assert.Contains("Lines:MinProminenceDb", error.Message, StringComparison.Ordinal);
        Assert.Contains("Spectra:HopSeconds", error.Message, StringComparison.Ordinal);
        Assert.DoesNotContain("Analysis:", error.Message, StringComparison.Ordinal);
        Assert.Contains(options.Validate("Analysis"), e => e.StartsWith("Analysis:Spectra:HopSeconds", StringComparison.Ordinal));
        Assert.Equal("options", error.ParamName);
    }

    [Fact]
    public void Chunk_of_another_layout_is_rejected()
    {
        var analyzer = new StreamAnalyzer(Layout(250, 2), new AnalysisOptions());
        var other = Layout(256, 2);

        var error = Assert.Throws<ArgumentException>(() => analyzer.Append(new SampleChunk(other, 0, 10, new float[20]), new FrameRecorder()));

        Assert.Equal("chunk", error.ParamName);
    }

    [Fact]
    public void Frames_come_every_hop_with_stream_indices_and_times()
    {
        var room = ScenarioRunner.Room(250, 4, new SimulatedTone { FrequencyHz = 50, AmplitudeUvRms = 5 });
        var simulator = new RoomSimulator(room, 1, Start);
        var analyzer = new StreamAnalyzer(simulator.Layout, new AnalysisOptions());
        var recorder = new FrameRecorder();
        for (var i = 0; i < 12; i++)
        {
            analyzer.Append(simulator.Next(250), recorder);
        }

        // Defaults: 8 s span, 2 s hop → frames end at 8, 10, 12 s.
        Assert.Equal([0L, 500, 1000], recorder.Frames.Select(f => f.StartSampleIndex));
        Assert.Equal([2000L, 2500, 3000], recorder.Frames.Select(f => f.EndSampleIndex));
        Assert.Equal(Start.AddSeconds(2), recorder.Frames[1].StartUtc);
        Assert.All(recorder.Frames, f => Assert.Equal(4, f.AnalysedChannelCount));
    }

    [Fact]
    public void A_jump_in_sample_index_is_a_gap_that_restarts_the_span()
    {
        var room = ScenarioRunner.Room(250, 2, new SimulatedTone { FrequencyHz = 50, AmplitudeUvRms = 5 });
        var simulator = new RoomSimulator(room, 2);
        var analyzer = new StreamAnalyzer(simulator.Layout, new AnalysisOptions());
        var recorder = new FrameRecorder();
        analyzer.Append(simulator.Next(2500), recorder); // frames at 0–8 s and 2–10 s
        var skipped = simulator.Next(100);
        var afterGap = simulator.Next(2000);

        analyzer.Append(afterGap, recorder);

        Assert.Equal(1, analyzer.GapCount);
        Assert.Equal(3, recorder.Frames.Count);
        Assert.Equal(afterGap.FirstSampleIndex, recorder.Frames[2].StartSampleIndex);
        Assert.Equal(afterGap.EndSampleIndex, recorder.Frames[2].EndSampleIndex);
        Assert.True(skipped.FirstSampleIndex > 0);

        // Overlap (index going back) is a gap too.
        analyzer.Append(afterGap, recorder);
        Assert.Equal(2, analyzer.GapCount);
    }

    [Fact]
    public void Results_do_not_depend_on_chunk_size()
    {
        var room = ScenarioRunner.Room(500, 6, new SimulatedTone { FrequencyHz = 50, AmplitudeUvRms = 3, HarmonicAmplitudes = [0.5, 0.5] });

        var small = ScenarioRunner.Run(room, 30, 9, chunkSeconds: 0.274);
        var large = ScenarioRunner.Run(room, 30, 9, chunkSeconds: 7);

        Assert.Equal(small.Count, large.Count);
        for (var i = 0; i < small.Count; i++)
        {
            Assert.Equal(small[i].Lines.Select(l => l.FrequencyHz), large[i].Lines.Select(l => l.FrequencyHz));
            Assert.Equal(small[i].Lines.Select(l => l.AmplitudeUvRms), large[i].Lines.Select(l => l.AmplitudeUvRms));
        }
    }

    [Fact]
    public void Flat_and_non_finite_channels_leave_the_share_denominator()
    {
        var room = ScenarioRunner.Room(250, 4, new SimulatedTone { FrequencyHz = 50, AmplitudeUvRms = 5 });
        room.Faults =
        [
            new SimulatedFault { Kind = SimulatedFaultKind.Flat, Channel = room.Channels[1].Label },
            new SimulatedFault { Kind = SimulatedFaultKind.NaNBurst, Channel = room.Channels[2].Label, OnsetSeconds = 3, OffsetSeconds = 3.5 },
        ];

        var frame = ScenarioRunner.Run(room, 8, 3).Single();

        Assert.Equal(2, frame.AnalysedChannelCount);
        Assert.Contains(frame.Faults, f => f is { Channel: 1, Kind: ChannelFaultKind.Flat, Fraction: 1 });
        Assert.Contains(frame.Faults, f => f is { Channel: 2, Kind: ChannelFaultKind.NonFinite } && Math.Abs(f.Fraction - (0.5 / 8)) < 1e-9);
        var mains = Assert.IsType<LineSnapshot>(frame.Near(50));
        Assert.Equal(2, mains.AffectedChannelCount);
        Assert.Equal(1.0, mains.ChannelShare);
    }

    [Fact]
    public void Steady_state_appends_allocate_at_most_what_the_fft_library_does()
    {
        var room = ScenarioRunner.Room(500, 8, new SimulatedTone { FrequencyHz = 50, AmplitudeUvRms = 3, HarmonicAmplitudes = [0.5, 0.5] });
        var simulator = new RoomSimulator(room, 4);
        var analyzer = new StreamAnalyzer(simulator.Layout, new AnalysisOptions());
        var sink = new CountingSink();
        var chunks = Enumerable.Range(0, 40).Select(_ => simulator.Next(500)).ToArray();
        for (var i = 0; i < 20; i++)
        {
            analyzer.Append(chunks[i], sink);
        }

        var framesBefore = sink.Frames;
        var before = GC.GetAllocatedBytesForCurrentThread();
        for (var i = 20; i < 40; i++)
        {
            analyzer.Append(chunks[i], sink);
        }

        var frames = sink.Frames - framesBefore;
        var perFrame = (GC.GetAllocatedBytesForCurrentThread() - before) / (double)frames;
        Assert.Equal(10, frames);

        // What the FFT kernel alone allocates for one frame's new segments (8 channels × 1 segment of 2000 samples).
        var kernel = Core.Spectra.PeriodogramKernels.Create(2000, 500);
        var samples = new double[8 * 2000];
        var periodograms = new double[8 * kernel.BinCount];
        kernel.Compute(samples, 8, 2000, periodograms);
        var kernelBefore = GC.GetAllocatedBytesForCurrentThread();
        for (var i = 0; i < frames; i++)
        {
            kernel.Compute(samples, 8, 2000, periodograms);
        }

        var kernelPerFrame = (GC.GetAllocatedBytesForCurrentThread() - kernelBefore) / (double)frames;

        // Everything else (faults, line finding, combining, attribution, frame) is preallocated. The library's own
        // allocations vary by a few hundred bytes from call to call (its parallel loops), hence the 0.5 % slack.
        Assert.True(perFrame <= (kernelPerFrame * 1.005) + 64, $"{perFrame} bytes per frame, kernel {kernelPerFrame}");
    }

    private static StreamLayout Layout(double rate, int channels) =>
        new(rate, Enumerable.Range(0, channels).Select(c => new ChannelInfo($"C{c}")).ToArray());

    private sealed class CountingSink : IAnalysisFrameSink
    {
        public int Frames { get; private set; }

        public void OnFrame(AnalysisFrame frame) => Frames++;
    }
}
