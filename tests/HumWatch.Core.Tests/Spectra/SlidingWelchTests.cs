using HumWatch.Core.Spectra;
using Xunit;

namespace HumWatch.Core.Tests.Spectra;

public sealed class SlidingWelchTests
{
    // fs 100 Hz, 1 s segments, 50 % overlap, 3 s span, 1 s hop: L = 100, step 50, K = 5, span 300, hop 100.
    private static SpectralOptions SmallOptions() => new() { SegmentSeconds = 1, OverlapFraction = 0.5, SpanSeconds = 3, HopSeconds = 1 };

    [Fact]
    public void Defaults_at_500_Hz_give_2000_sample_segments_three_per_8_s_span_and_a_1000_sample_hop()
    {
        var welch = new SlidingWelch(500, 32, new SpectralOptions());

        Assert.Equal(2000, welch.SegmentLength);
        Assert.Equal(1000, welch.SegmentStep);
        Assert.Equal(3, welch.SegmentsPerSpan);
        Assert.Equal(4000, welch.SpanSamples);
        Assert.Equal(1000, welch.HopSamples);
        Assert.Equal(1001, welch.BinCount);
        Assert.Equal(0.25, welch.BinWidthHz, 15);
        Assert.Equal(32, welch.ChannelCount);
        Assert.Equal(500, welch.SampleRateHz);
    }

    public static TheoryData<double, double, double, double, double, int> FrameCases() => new()
    {
        // fs, segment s, overlap, span s, hop s, chunk samples (0 = one hop, -1 = ten spans)
        { 100, 1, 0.5, 3, 1, 1 },
        { 100, 1, 0.5, 3, 1, 37 },
        { 100, 1, 0.5, 3, 1, 0 },
        { 100, 1, 0.5, 3, 1, -1 },
        { 250, 0.5, 0.75, 1, 0.25, 37 },     // L = 125 (odd), noverlap = round(93.75) = 94, step 31
        { 64, 1, 0, 2, 5, 37 },              // hop longer than the span: segments between spans are skipped
        { 128, 2, 0.5, 2, 1, -1 },           // one segment per span
    };

    [Theory]
    [MemberData(nameof(FrameCases))]
    public void Every_frame_equals_a_fresh_Welch_PSD_over_exactly_its_span(double fs, double segmentSeconds, double overlap, double spanSeconds, double hopSeconds, int chunk)
    {
        var options = new SpectralOptions { SegmentSeconds = segmentSeconds, OverlapFraction = overlap, SpanSeconds = spanSeconds, HopSeconds = hopSeconds };
        const int channels = 3;
        var probe = new SlidingWelch(fs, channels, options);
        var total = (probe.SpanSamples * 12) + 17;
        var signal = TestSignals.Channels(channels, total, fs, seed: 5);
        var chunkSamples = chunk switch { 0 => probe.HopSamples, -1 => probe.SpanSamples * 10, _ => chunk };

        var welch = new SlidingWelch(fs, channels, options);
        var sink = new RecordingSink();
        TestSignals.AppendInChunks(welch, signal, total, chunkSamples, sink);

        var expectedFrames = ((total - welch.SpanSamples) / welch.HopSamples) + 1;
        Assert.Equal(expectedFrames, sink.Frames.Count);
        var overlapSamples = welch.SegmentLength - welch.SegmentStep;
        var reference = new double[welch.BinCount];
        for (var f = 0; f < sink.Frames.Count; f++)
        {
            var frame = sink.Frames[f];
            Assert.Equal((long)f * welch.HopSamples, frame.Start);
            Assert.Equal(frame.Start + welch.SpanSamples, frame.End);
            for (var c = 0; c < channels; c++)
            {
                var span = TestSignals.AsDoubles(signal[c].AsSpan((int)frame.Start, welch.SpanSamples));
                var segments = WelchPsd.Compute(span, fs, welch.SegmentLength, overlapSamples, reference);
                Assert.Equal(welch.SegmentsPerSpan, segments);
                SpectraAssert.BinsClose(reference, frame.Psd[c], 1e-12, 1e-12, $"frame {f} channel {c}");
            }
        }
    }

    [Fact]
    public void Segment_start_samples_and_periodograms_describe_the_frames_segments()
    {
        const double fs = 100;
        var welch = new SlidingWelch(fs, 2, SmallOptions());
        var signal = TestSignals.Channels(2, 1000, fs, seed: 9);
        var single = new double[welch.BinCount];
        var checkedFrames = 0;
        var sink = new CallbackSink((w, start, end) =>
        {
            for (var i = 0; i < w.SegmentsPerSpan; i++)
            {
                var segmentStart = w.SegmentStartSample(i);
                Assert.Equal(start + (i * w.SegmentStep), segmentStart);
                for (var c = 0; c < 2; c++)
                {
                    var samples = TestSignals.AsDoubles(signal[c].AsSpan((int)segmentStart, w.SegmentLength));
                    WelchPsd.Compute(samples, fs, w.SegmentLength, 0, single);
                    SpectraAssert.BinsClose(single, w.SegmentPeriodogram(c, i), 1e-12, 1e-12, $"segment {i} channel {c}");
                }
            }

            Assert.Equal(end, w.SegmentStartSample(w.SegmentsPerSpan - 1) + w.SegmentLength);
            checkedFrames++;
        });

        TestSignals.AppendInChunks(welch, signal, 1000, 37, sink);

        Assert.Equal(8, checkedFrames); // (1000 − 300) / 100 + 1
        Assert.Equal(700, welch.SegmentStartSample(0));
        Assert.Equal(900, welch.SegmentStartSample(4));
    }

    [Fact]
    public void Segment_periodograms_read_after_newer_segments_arrive_are_refused()
    {
        // hop 2 steps: after a frame, one more segment overwrites the oldest slot before the next frame.
        var options = new SpectralOptions { SegmentSeconds = 1, OverlapFraction = 0.5, SpanSeconds = 3, HopSeconds = 1 };
        var welch = new SlidingWelch(100, 1, options);
        var signal = TestSignals.Channels(1, 350, 100, seed: 1);

        welch.Append(signal[0], 350, new RecordingSink());

        Assert.Throws<InvalidOperationException>(() => welch.SegmentPeriodogram(0, 0));
        Assert.Equal(welch.BinCount, welch.AveragedPsd(0).Length);
    }

    [Fact]
    public void Reset_forgets_earlier_samples_and_restarts_sample_indices()
    {
        const double fs = 100;
        var welch = new SlidingWelch(fs, 2, SmallOptions());
        var first = TestSignals.Channels(2, 455, fs, seed: 3);
        var second = TestSignals.Channels(2, 620, fs, seed: 4);
        TestSignals.AppendInChunks(welch, first, 455, 37, new RecordingSink());

        welch.Reset();
        Assert.Throws<InvalidOperationException>(() => welch.AveragedPsd(0));
        var sink = new RecordingSink();
        TestSignals.AppendInChunks(welch, second, 620, 37, sink);

        Assert.Equal(4, sink.Frames.Count); // (620 − 300) / 100 + 1
        Assert.Equal(0, sink.Frames[0].Start);
        Assert.Equal(300, sink.Frames[0].End);
        var reference = new double[welch.BinCount];
        foreach (var frame in sink.Frames)
        {
            for (var c = 0; c < 2; c++)
            {
                WelchPsd.Compute(TestSignals.AsDoubles(second[c].AsSpan((int)frame.Start, 300)), fs, 100, 50, reference);
                SpectraAssert.BinsClose(reference, frame.Psd[c], 1e-12, 1e-12, $"after reset, frame at {frame.Start}, channel {c}");
            }
        }
    }

    [Fact]
    public void Non_finite_samples_are_analysed_as_zero()
    {
        const double fs = 100;
        var welch = new SlidingWelch(fs, 2, SmallOptions());
        var signal = TestSignals.Channels(2, 300, fs, seed: 8);
        signal[1][10] = float.NaN;
        signal[1][150] = float.PositiveInfinity;
        signal[1][299] = float.NegativeInfinity;
        var sink = new RecordingSink();

        TestSignals.AppendInChunks(welch, signal, 300, 300, sink);

        var cleaned = TestSignals.AsDoubles(signal[1]);
        cleaned[10] = 0;
        cleaned[150] = 0;
        cleaned[299] = 0;
        var reference = new double[welch.BinCount];
        WelchPsd.Compute(cleaned, fs, 100, 50, reference);
        var frame = Assert.Single(sink.Frames);
        Assert.All(frame.Psd[1], v => Assert.True(double.IsFinite(v)));
        SpectraAssert.BinsClose(reference, frame.Psd[1], 1e-12, 1e-12, "channel with non-finite samples");
    }

    [Fact]
    public void Averaged_PSD_not_read_during_the_frame_still_equals_the_frames_Welch_PSD_after_later_segments_arrive()
    {
        // fs 100, 1 s segments, 50 % overlap, 3 s span, 2 s hop: K = 5, hop of 4 steps. One frame, then two more segments
        // whose periodograms replace two of the frame's rows; channel 1 is read inside the callback, the others only after.
        var options = new SpectralOptions { SegmentSeconds = 1, OverlapFraction = 0.5, SpanSeconds = 3, HopSeconds = 2 };
        const int channels = 3;
        var welch = new SlidingWelch(100, channels, options);
        var total = welch.SpanSamples + (2 * welch.SegmentStep);
        var signal = TestSignals.Channels(channels, total, 100, seed: 9);
        double[]? readInside = null;
        var frames = 0;
        var sink = new CallbackSink((w, start, end) =>
        {
            frames++;
            readInside = w.AveragedPsd(1).ToArray();
        });

        welch.Append(TestSignals.ChannelMajor(signal, total), total, sink);

        Assert.Equal(1, frames);
        var reference = new double[welch.BinCount];
        for (var c = 0; c < channels; c++)
        {
            var span = TestSignals.AsDoubles(signal[c].AsSpan(0, welch.SpanSamples));
            WelchPsd.Compute(span, 100, welch.SegmentLength, welch.SegmentLength - welch.SegmentStep, reference);
            SpectraAssert.BinsClose(reference, welch.AveragedPsd(c).ToArray(), 1e-12, 1e-12, $"channel {c} after the frame");
        }

        Assert.Equal(welch.AveragedPsd(1).ToArray(), readInside);
    }

    [Fact]
    public void A_hop_longer_than_the_span_skips_the_FFTs_of_segments_no_frame_uses()
    {
        // fs 64, 1 s segments without overlap, 2 s span, 5 s hop: segments 0,1 | 5,6 | 10,11 are the only ones averaged.
        var options = new SpectralOptions { SegmentSeconds = 1, OverlapFraction = 0, SpanSeconds = 2, HopSeconds = 5 };
        var kernel = new CountingKernel(64);
        var welch = new SlidingWelch(64, 2, options, kernel);
        var signal = TestSignals.Channels(2, 64 * 12, 64, seed: 2);

        welch.Append(TestSignals.ChannelMajor(signal, 64 * 12), 64 * 12, new RecordingSink());

        Assert.Equal(6 * 2, kernel.PeriodogramsComputed); // 6 segments × 2 channels; all 12 segments would give 24
    }

    [Fact]
    public void Steady_state_appends_allocate_nothing()
    {
        // The test kernel allocates nothing, so this measures our buffering, averaging and framing honestly.
        // (MathNet 5.0.0's FFT allocates scratch per transform on its own; see MathNetPeriodogramKernel.)
        const double fs = 100;
        var welch = new SlidingWelch(fs, 4, SmallOptions(), new CountingKernel(100));
        var block = TestSignals.ChannelMajor(TestSignals.Channels(4, 1000, fs, seed: 6), 1000);
        var sink = new SummingSink();
        welch.Append(block, 1000, sink); // warm-up
        var framesBefore = sink.Frames;

        var before = GC.GetAllocatedBytesForCurrentThread();
        for (var round = 0; round < 3; round++)
        {
            for (var offset = 0; offset + 37 <= 1000; offset += 37)
            {
                // 37-sample chunks of each channel: copy into a preallocated channel-major buffer first.
                sink.Fill(block, 1000, offset, 37, 4);
                welch.Append(sink.Chunk.AsSpan(0, 37 * 4), 37, sink);
            }

            for (var i = 0; i < 100; i++)
            {
                sink.Fill(block, 1000, i, 1, 4);
                welch.Append(sink.Chunk.AsSpan(0, 4), 1, sink);
            }
        }

        var allocated = GC.GetAllocatedBytesForCurrentThread() - before;

        Assert.True(sink.Frames - framesBefore >= 30, $"only {sink.Frames - framesBefore} frames during the measurement");
        Assert.True(double.IsFinite(sink.Total) && sink.Total > 0);
        Assert.Equal(0, allocated);
    }

    [Fact]
    public void Appending_or_resetting_from_inside_the_callback_is_refused()
    {
        var welch = new SlidingWelch(100, 1, SmallOptions());
        var signal = TestSignals.Channels(1, 300, 100, seed: 1);
        var sink = new CallbackSink((w, _, _) => w.Reset());

        Assert.Throws<InvalidOperationException>(() => welch.Append(signal[0], 300, sink));
    }

    private sealed record Frame(long Start, long End, double[][] Psd);

    private sealed class RecordingSink : ISlidingWelchSink
    {
        public List<Frame> Frames { get; } = [];

        public void OnSpan(SlidingWelch welch, long spanStartSample, long spanEndSample)
        {
            var psd = new double[welch.ChannelCount][];
            for (var c = 0; c < psd.Length; c++)
            {
                psd[c] = welch.AveragedPsd(c).ToArray();
            }

            Frames.Add(new Frame(spanStartSample, spanEndSample, psd));
        }
    }

    private sealed class CallbackSink(Action<SlidingWelch, long, long> onSpan) : ISlidingWelchSink
    {
        public void OnSpan(SlidingWelch welch, long spanStartSample, long spanEndSample) => onSpan(welch, spanStartSample, spanEndSample);
    }

    private sealed class SummingSink : ISlidingWelchSink
    {
        public int Frames { get; private set; }

        public double Total { get; private set; }

        public float[] Chunk { get; } = new float[37 * 4];

        public void Fill(float[] channelMajor, int samplesPerChannel, int offset, int count, int channels)
        {
            for (var c = 0; c < channels; c++)
            {
                Array.Copy(channelMajor, (c * samplesPerChannel) + offset, Chunk, c * count, count);
            }
        }

        public void OnSpan(SlidingWelch welch, long spanStartSample, long spanEndSample)
        {
            Frames++;
            for (var c = 0; c < welch.ChannelCount; c++)
            {
                var psd = welch.AveragedPsd(c);
                for (var k = 0; k < psd.Length; k++)
                {
                    Total += psd[k];
                }
            }
        }
    }
}
