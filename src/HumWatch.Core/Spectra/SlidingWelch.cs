using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;

namespace HumWatch.Core.Spectra;

/// <summary>
/// Welch PSDs of one stream's channels over a sliding span, emitted every hop. Each segment's periodogram is computed
/// once, when its last sample arrives, and kept in a ring of <see cref="SegmentsPerSpan"/> per channel, so a hop costs
/// only its new segments. Memory is bounded: one segment of samples per channel plus the periodogram ring.
/// Not thread-safe; one instance per stream. No allocation in steady state (the kernel's own work aside).
/// </summary>
public sealed class SlidingWelch
{
    // Longest segment accepted, so that channel × segment buffers stay far from int overflow.
    private const int MaxSegmentLength = 1 << 24;

    private readonly IPeriodogramKernel _kernel;
    private readonly int _hopSteps;

    // Channel c's not-yet-complete segment lives at [c·L, c·L + _fill); all channels fill in lockstep.
    private readonly double[] _samples;

    // Ring of periodograms: slot s (segment index mod K), channel c, at (s·C + c)·B.
    private readonly double[] _periodograms;
    private readonly double[] _averaged;

    // Which channels' means of the newest frame are computed, and where the frame's rows start, oldest first.
    private readonly bool[] _averagedReady;
    private readonly int[] _rowOffsets;
    private int _fill;
    private long _segmentsCompleted;
    private long _lastComputedSegment = -1;
    private long _frameNewestSegment = -1;
    private bool _inCallback;

    /// <summary>Samples per Welch segment for these options at this rate, as the constructor computes them (for building a kernel up front).</summary>
    public static int SegmentLengthFor(SpectralOptions options, double sampleRateHz)
    {
        ArgumentNullException.ThrowIfNull(options);
        return (int)SegmentSamplesFor(options, sampleRateHz);
    }

    private static double SegmentSamplesFor(SpectralOptions options, double sampleRateHz) => Math.Round(options.SegmentSeconds * sampleRateHz);

    /// <summary>
    /// Creates the sliding analysis for <paramref name="channelCount"/> channels (≥ 1) at <paramref name="sampleRateHz"/> (> 0)
    /// with <paramref name="options"/> (checked by <see cref="SpectralOptions.Validate"/>). <paramref name="kernel"/> defaults
    /// to <see cref="PeriodogramKernels.Create"/>; a given kernel must have <see cref="SegmentLength"/> and the same sample rate.
    /// </summary>
    public SlidingWelch(double sampleRateHz, int channelCount, SpectralOptions options, IPeriodogramKernel? kernel = null)
    {
        if (!(sampleRateHz > 0) || !double.IsFinite(sampleRateHz))
        {
            throw new ArgumentOutOfRangeException(nameof(sampleRateHz), sampleRateHz, "Sample rate must be a positive finite number of Hz.");
        }

        ArgumentOutOfRangeException.ThrowIfLessThan(channelCount, 1);
        ArgumentNullException.ThrowIfNull(options);
        var errors = options.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentException(string.Join(" ", errors), nameof(options));
        }

        var segmentSamples = SegmentSamplesFor(options, sampleRateHz);
        if (segmentSamples < 2 || segmentSamples > MaxSegmentLength)
        {
            throw new ArgumentException($"SegmentSeconds = {options.SegmentSeconds} s at {sampleRateHz} Hz gives {segmentSamples} samples per segment; it must give 2 … {MaxSegmentLength}.", nameof(options));
        }

        var segmentLength = (int)segmentSamples;

        // scipy's noverlap: whole samples of overlap; the step is what remains of the segment.
        var overlapSamples = (int)Math.Round(options.OverlapFraction * segmentLength);
        var step = segmentLength - overlapSamples;
        if (step < 1)
        {
            throw new ArgumentException($"OverlapFraction = {options.OverlapFraction} leaves no step between {segmentLength}-sample segments.", nameof(options));
        }

        // Validate() has checked that span − segment and hop are whole multiples of the step in seconds.
        var stepSeconds = options.SegmentSeconds * (1 - options.OverlapFraction);
        var segmentsPerSpan = 1 + (int)Math.Round((options.SpanSeconds - options.SegmentSeconds) / stepSeconds);
        var hopSteps = (int)Math.Round(options.HopSeconds / stepSeconds);
        if (hopSteps < 1 || segmentsPerSpan < 1
            || (long)segmentsPerSpan * channelCount * ((segmentLength / 2) + 1) > Array.MaxLength
            || (long)channelCount * segmentLength > Array.MaxLength)
        {
            throw new ArgumentException($"A span of {segmentsPerSpan} segments with a hop of {hopSteps} segment steps (SpanSeconds, HopSeconds) is out of range for {channelCount} channels.", nameof(options));
        }

        kernel ??= PeriodogramKernels.Create(segmentLength, sampleRateHz);
        if (kernel.SegmentLength != segmentLength)
        {
            throw new ArgumentException($"Kernel segment length {kernel.SegmentLength} differs from the options' {segmentLength} samples.", nameof(kernel));
        }

        _kernel = kernel;
        _hopSteps = hopSteps;
        SampleRateHz = sampleRateHz;
        ChannelCount = channelCount;
        SegmentLength = segmentLength;
        SegmentStep = step;
        SegmentsPerSpan = segmentsPerSpan;
        SpanSamples = segmentLength + ((segmentsPerSpan - 1) * step);
        HopSamples = hopSteps * step;
        BinCount = kernel.BinCount;
        BinWidthHz = sampleRateHz / segmentLength;
        _samples = new double[channelCount * segmentLength];
        _periodograms = new double[segmentsPerSpan * channelCount * BinCount];
        _averaged = new double[channelCount * BinCount];
        _averagedReady = new bool[channelCount];
        _rowOffsets = new int[segmentsPerSpan];
    }

    /// <summary>Sample rate in Hz.</summary>
    public double SampleRateHz { get; }

    /// <summary>Number of channels in each appended block.</summary>
    public int ChannelCount { get; }

    /// <summary>Samples per Welch segment, round(SegmentSeconds·fs) (nperseg = nfft).</summary>
    public int SegmentLength { get; }

    /// <summary>Samples between segment starts: SegmentLength − round(OverlapFraction·SegmentLength) (scipy's nperseg − noverlap).</summary>
    public int SegmentStep { get; }

    /// <summary>Segments averaged per frame, K; the span is SegmentLength + (K − 1)·SegmentStep samples.</summary>
    public int SegmentsPerSpan { get; }

    /// <summary>Samples in one analysis span.</summary>
    public int SpanSamples { get; }

    /// <summary>Samples between consecutive frames (a whole number of segment steps).</summary>
    public int HopSamples { get; }

    /// <summary>One-sided bins per PSD: SegmentLength / 2 + 1.</summary>
    public int BinCount { get; }

    /// <summary>Bin spacing in Hz: fs / SegmentLength.</summary>
    public double BinWidthHz { get; }

    /// <summary>
    /// Appends the next contiguous block: <paramref name="samplesPerChannel"/> samples (µV) of every channel, channel-major
    /// (channel c at [c·samplesPerChannel, (c+1)·samplesPerChannel)). Non-finite samples are analysed as 0.
    /// Calls <paramref name="sink"/> once per completed frame: the first when a full span is in, then every hop.
    /// </summary>
    public void Append(ReadOnlySpan<float> channelMajor, int samplesPerChannel, ISlidingWelchSink sink)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(samplesPerChannel);
        ArgumentNullException.ThrowIfNull(sink);
        if (channelMajor.Length != (long)samplesPerChannel * ChannelCount)
        {
            throw new ArgumentException($"Block must hold {ChannelCount} channels × {samplesPerChannel} samples = {(long)samplesPerChannel * ChannelCount} values (got {channelMajor.Length}).", nameof(channelMajor));
        }

        ThrowIfInCallback();
        var segmentLength = SegmentLength;
        var samples = _samples.AsSpan();
        var offset = 0;
        while (offset < samplesPerChannel)
        {
            var take = Math.Min(samplesPerChannel - offset, segmentLength - _fill);
            for (var c = 0; c < ChannelCount; c++)
            {
                WidenFinite(channelMajor.Slice((c * samplesPerChannel) + offset, take), samples.Slice((c * segmentLength) + _fill, take));
            }

            _fill += take;
            offset += take;
            if (_fill == segmentLength)
            {
                CompleteSegment(sink);
            }
        }
    }

    // target[i] = source[i] widened to double, or 0 where it is not finite (v − v is 0 exactly when v is finite).
    private static void WidenFinite(ReadOnlySpan<float> source, Span<double> target)
    {
        var i = 0;
        if (Vector256.IsHardwareAccelerated && source.Length >= Vector256<float>.Count)
        {
            ref var from = ref MemoryMarshal.GetReference(source);
            ref var to = ref MemoryMarshal.GetReference(target);
            for (; i <= source.Length - Vector256<float>.Count; i += Vector256<float>.Count)
            {
                var v = Vector256.LoadUnsafe(ref from, (nuint)i);
                var finite = Vector256.Equals(v - v, Vector256<float>.Zero);
                var (lower, upper) = Vector256.Widen(finite & v);
                lower.StoreUnsafe(ref to, (nuint)i);
                upper.StoreUnsafe(ref to, (nuint)(i + Vector256<double>.Count));
            }
        }

        for (; i < source.Length; i++)
        {
            var value = source[i];
            target[i] = float.IsFinite(value) ? value : 0.0;
        }
    }

    /// <summary>Mean of the K periodograms of the newest frame's span for <paramref name="channel"/>, µV²/Hz, <see cref="BinCount"/> bins.</summary>
    public ReadOnlySpan<double> AveragedPsd(int channel)
    {
        CheckChannel(channel);
        if (_frameNewestSegment < 0)
        {
            throw new InvalidOperationException("No frame has been completed since the last Reset.");
        }

        if (!_averagedReady[channel])
        {
            AverageChannel(channel);
        }

        return _averaged.AsSpan(channel * BinCount, BinCount);
    }

    /// <summary>
    /// Periodogram (µV²/Hz) of segment <paramref name="segmentInSpan"/> (0 = oldest … K − 1) of the newest frame's span for
    /// <paramref name="channel"/>. Valid inside <see cref="ISlidingWelchSink.OnSpan"/>; later segments may replace it after that.
    /// </summary>
    public ReadOnlySpan<double> SegmentPeriodogram(int channel, int segmentInSpan)
    {
        CheckChannel(channel);
        CheckSegmentInSpan(segmentInSpan);
        if (_lastComputedSegment > _frameNewestSegment)
        {
            throw new InvalidOperationException("The frame's segment periodograms have been replaced by newer segments; read them inside OnSpan.");
        }

        var slot = (int)((_frameNewestSegment - SegmentsPerSpan + 1 + segmentInSpan) % SegmentsPerSpan);
        return _periodograms.AsSpan(((slot * ChannelCount) + channel) * BinCount, BinCount);
    }

    /// <summary>First sample (index since the last Reset) of segment <paramref name="segmentInSpan"/> (0 = oldest) of the newest frame's span.</summary>
    public long SegmentStartSample(int segmentInSpan)
    {
        CheckSegmentInSpan(segmentInSpan);
        return (_frameNewestSegment - SegmentsPerSpan + 1 + segmentInSpan) * SegmentStep;
    }

    /// <summary>Forgets all samples and segments (a gap or a new session); sample indices restart at 0.</summary>
    public void Reset()
    {
        ThrowIfInCallback();
        _fill = 0;
        _segmentsCompleted = 0;
        _lastComputedSegment = -1;
        _frameNewestSegment = -1;
    }

    private void CompleteSegment(ISlidingWelchSink sink)
    {
        var segment = _segmentsCompleted;
        var k = SegmentsPerSpan;
        var bins = BinCount;
        var channels = ChannelCount;

        // With a hop longer than the span, segments between spans are never averaged: skip their FFTs.
        if (segment % _hopSteps < k)
        {
            var slot = (int)(segment % k);
            _kernel.Compute(_samples, channels, SegmentLength, _periodograms.AsSpan(slot * channels * bins, channels * bins));
            _lastComputedSegment = segment;
        }

        _segmentsCompleted = segment + 1;

        // Keep the overlap: the next segment starts one step later.
        var keep = SegmentLength - SegmentStep;
        for (var c = 0; c < channels; c++)
        {
            var start = c * SegmentLength;
            Array.Copy(_samples, start + SegmentStep, _samples, start, keep);
        }

        _fill = keep;

        var oldest = segment - k + 1;
        if (oldest < 0 || oldest % _hopSteps != 0)
        {
            return;
        }

        _frameNewestSegment = segment;
        for (var i = 0; i < k; i++)
        {
            _rowOffsets[i] = (int)((oldest + i) % k) * channels * bins;
        }

        Array.Clear(_averagedReady);
        _inCallback = true;
        try
        {
            sink.OnSpan(this, oldest * SegmentStep, (segment * SegmentStep) + SegmentLength);
        }
        finally
        {
            _inCallback = false;
            for (var c = 0; c < channels; c++)
            {
                if (!_averagedReady[c])
                {
                    AverageChannel(c);
                }
            }
        }
    }

    // Channel c's mean of the newest frame's K rows, oldest first, so each frame equals a fresh Welch mean over its
    // span: per bin ((row₀ + row₁) + …) / K. The vector loop does exactly those operations per lane, so it gives the
    // same bits. Done on first use inside OnSpan (while the consumer is about to read it, so it is still in cache) and
    // for the rest of the channels right after OnSpan, before later segments can replace the rows.
    private void AverageChannel(int channel)
    {
        var k = SegmentsPerSpan;
        var bins = BinCount;
        var divisor = (double)k;
        ref var rows = ref MemoryMarshal.GetArrayDataReference(_periodograms);
        ref var mean = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_averaged), channel * bins);
        ref var offsets = ref MemoryMarshal.GetArrayDataReference(_rowOffsets);
        var channelAt = channel * bins;
        var b = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            var vectorDivisor = Vector256.Create(divisor);
            for (; b <= bins - Vector256<double>.Count; b += Vector256<double>.Count)
            {
                var sum = Vector256.LoadUnsafe(ref rows, (nuint)(offsets + channelAt + b));
                for (var i = 1; i < k; i++)
                {
                    sum += Vector256.LoadUnsafe(ref rows, (nuint)(Unsafe.Add(ref offsets, i) + channelAt + b));
                }

                (sum / vectorDivisor).StoreUnsafe(ref mean, (nuint)b);
            }
        }

        for (; b < bins; b++)
        {
            var sum = Unsafe.Add(ref rows, offsets + channelAt + b);
            for (var i = 1; i < k; i++)
            {
                sum += Unsafe.Add(ref rows, Unsafe.Add(ref offsets, i) + channelAt + b);
            }

            Unsafe.Add(ref mean, b) = sum / divisor;
        }

        _averagedReady[channel] = true;
    }

    private void CheckChannel(int channel)
    {
        if ((uint)channel >= (uint)ChannelCount)
        {
            throw new ArgumentOutOfRangeException(nameof(channel), channel, $"Channel must be between 0 and {ChannelCount - 1}.");
        }
    }

    private void CheckSegmentInSpan(int segmentInSpan)
    {
        if ((uint)segmentInSpan >= (uint)SegmentsPerSpan)
        {
            throw new ArgumentOutOfRangeException(nameof(segmentInSpan), segmentInSpan, $"Segment in span must be between 0 and {SegmentsPerSpan - 1}.");
        }

        if (_frameNewestSegment < 0)
        {
            throw new InvalidOperationException("No frame has been completed since the last Reset.");
        }
    }

    private void ThrowIfInCallback()
    {
        if (_inCallback)
        {
            throw new InvalidOperationException("Append and Reset cannot be called from inside OnSpan.");
        }
    }
}
