using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Lines;
using HumWatch.Core.Signals;
using HumWatch.Core.Spectra;

namespace HumWatch.Core.Analysis;

/// <summary>
/// Analyses one stream: channel faults, sliding Welch spectra, per-channel line finding, cross-channel combination and
/// source attribution, one <see cref="AnalysisFrame"/> per hop. A jump or overlap in the chunks' sample indices is a
/// gap: the span restarts there and is never stitched across it. Not thread-safe; one instance per stream. Allocation-free
/// in steady state apart from what the FFT library allocates.
/// </summary>
public sealed class StreamAnalyzer
{
    private const int MaxLinesPerFrame = 256;

    private readonly StreamLayout _layout;
    private readonly SlidingWelch _welch;
    private readonly FaultDetector _faults;
    private readonly LineFinder _finder;
    private readonly SegmentConsistency _consistency;
    private readonly LineCombiner _combiner;
    private readonly LineAttributor _attributor;
    private readonly AnalysisFrame _frame;
    private readonly ChannelPeak[] _peaks;
    private readonly int[] _peakCounts;
    private readonly bool[] _excluded;
    private readonly ChannelFault[] _faultBuffer;
    private readonly float[] _slice;
    private readonly WelchAdapter _adapter;
    private long _baseIndex;
    private long _expectedNext = -1;
    private long _anchorIndex;
    private DateTimeOffset? _anchorUtc;
    private IAnalysisFrameSink? _sink;

    /// <summary>
    /// Creates the analysis of a stream with <paramref name="layout"/>. <paramref name="options"/> are validated
    /// (<see cref="AnalysisOptions.Validate"/>); problems throw one <see cref="ArgumentException"/> listing them all.
    /// <paramref name="kernel"/> defaults to <see cref="PeriodogramKernels.Create"/>.
    /// </summary>
    public StreamAnalyzer(StreamLayout layout, AnalysisOptions options, IPeriodogramKernel? kernel = null)
    {
        ArgumentNullException.ThrowIfNull(layout);
        ArgumentNullException.ThrowIfNull(options);
        var errors = options.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentException("Invalid analysis options: " + string.Join(" ", errors), nameof(options));
        }

        _layout = layout;
        var channels = layout.ChannelCount;
        _welch = new SlidingWelch(layout.SampleRateHz, channels, options.Spectra, kernel);
        _faults = new FaultDetector(layout, options.Faults, _welch.SpanSamples, _welch.HopSamples);
        var dof = WelchStatistics.EquivalentDegreesOfFreedom(_welch.SegmentLength, _welch.SegmentStep, _welch.SegmentsPerSpan);
        double[] correlations =
        [
            WelchStatistics.BinPowerCorrelation(_welch.SegmentLength, _welch.SegmentStep, _welch.SegmentsPerSpan, 1),
            WelchStatistics.BinPowerCorrelation(_welch.SegmentLength, _welch.SegmentStep, _welch.SegmentsPerSpan, 2),
            WelchStatistics.BinPowerCorrelation(_welch.SegmentLength, _welch.SegmentStep, _welch.SegmentsPerSpan, 3),
        ];
        _finder = new LineFinder(options.Lines, _welch.BinCount, _welch.BinWidthHz, dof, correlations);
        var stride = _finder.Capacity;
        _consistency = new SegmentConsistency(_welch.BinWidthHz);
        _combiner = new LineCombiner(channels, stride, _welch.BinWidthHz, _finder.FlankBins, _welch.SegmentsPerSpan, Math.Min(MaxLinesPerFrame, channels * stride), Math.Max(1, _finder.SearchedBinCount));
        _attributor = new LineAttributor(options.Sources, layout.SampleRateHz, _welch.BinWidthHz);
        _frame = new AnalysisFrame(layout, _welch.BinCount, _welch.BinWidthHz);
        _peaks = new ChannelPeak[channels * stride];
        _peakCounts = new int[channels];
        _excluded = new bool[channels];
        _faultBuffer = new ChannelFault[_faults.Capacity];
        _frame.LineBuffer = _combiner.Lines;
        _frame.FaultBuffer = _faultBuffer;
        _slice = new float[channels * _welch.HopSamples];
        _adapter = new WelchAdapter(this);
    }

    /// <summary>Gaps (jumps or overlaps in FirstSampleIndex) seen since construction; each restarted the span.</summary>
    public long GapCount { get; private set; }

    /// <summary>Samples per analysis span.</summary>
    public int SpanSamples => _welch.SpanSamples;

    /// <summary>Samples between frames.</summary>
    public int HopSamples => _welch.HopSamples;

    /// <summary>Samples per Welch segment.</summary>
    public int SegmentSamples => _welch.SegmentLength;

    /// <summary>Samples between Welch segment starts.</summary>
    public int SegmentStepSamples => _welch.SegmentStep;

    /// <summary>Spectral resolution, Hz.</summary>
    public double BinWidthHz => _welch.BinWidthHz;

    /// <summary>
    /// Adds the next chunk and calls <paramref name="sink"/> for every frame it completes. The chunk must have the same
    /// rate and channel labels as the stream (<see cref="StreamLayout.IsSameShape"/>), else <see cref="ArgumentException"/>.
    /// </summary>
    public void Append(SampleChunk chunk, IAnalysisFrameSink sink)
    {
        ArgumentNullException.ThrowIfNull(chunk);
        ArgumentNullException.ThrowIfNull(sink);
        if (!chunk.Layout.IsSameShape(_layout))
        {
            throw new ArgumentException($"Chunk layout ({chunk.Layout.SampleRateHz} Hz, {chunk.Layout.ChannelCount} channels) differs from the stream's ({_layout.SampleRateHz} Hz, {_layout.ChannelCount} channels) or its channel labels differ; start a new analyser for a new layout.", nameof(chunk));
        }

        var n = chunk.SamplesPerChannel;
        if (n == 0)
        {
            return;
        }

        if (_expectedNext >= 0 && chunk.FirstSampleIndex != _expectedNext)
        {
            GapCount++;
            RestartSpan();
        }

        if (_expectedNext < 0)
        {
            _baseIndex = chunk.FirstSampleIndex;
        }

        _expectedNext = chunk.EndSampleIndex;
        if (chunk.StartUtc is { } utc)
        {
            _anchorIndex = chunk.FirstSampleIndex;
            _anchorUtc = utc;
        }

        _sink = sink;
        try
        {
            // Feed at most one hop at a time so the fault statistics of every span the Welch stage completes are still held.
            var channels = _layout.ChannelCount;
            var hop = _welch.HopSamples;
            for (var offset = 0; offset < n; offset += hop)
            {
                var take = Math.Min(hop, n - offset);
                ReadOnlySpan<float> block;
                if (take == n)
                {
                    block = chunk.SamplesUv;
                }
                else
                {
                    for (var c = 0; c < channels; c++)
                    {
                        chunk.SamplesUv.Slice((c * n) + offset, take).CopyTo(_slice.AsSpan(c * take, take));
                    }

                    block = _slice.AsSpan(0, take * channels);
                }

                _faults.Append(block, take);
                _welch.Append(block, take, _adapter);
            }
        }
        finally
        {
            _sink = null;
        }
    }

    /// <summary>Forgets all samples (a new session); the next chunk starts a new span wherever its index lies.</summary>
    public void Reset()
    {
        RestartSpan();
        _anchorUtc = null;
    }

    private void RestartSpan()
    {
        _welch.Reset();
        _faults.Reset();
        _expectedNext = -1;
    }

    private void OnSpan(SlidingWelch welch, long spanStart, long spanEnd)
    {
        var frame = _frame;
        frame.FaultCount = _faults.Evaluate(spanStart, spanEnd, _faultBuffer, _excluded);
        var mean = frame.MeanPsdBuffer.AsSpan();
        mean.Clear();
        var analysed = 0;
        var stride = _finder.Capacity;
        for (var c = 0; c < _layout.ChannelCount; c++)
        {
            if (_excluded[c])
            {
                _peakCounts[c] = 0;
                continue;
            }

            var psd = welch.AveragedPsd(c);
            AddInto(mean, psd);

            var channelPeaks = _peaks.AsSpan(c * stride, stride);
            _peakCounts[c] = _consistency.Filter(channelPeaks, _finder.Find(psd, channelPeaks), _adapter, c);
            analysed++;
        }

        if (analysed > 0)
        {
            Scale(mean, 1.0 / analysed);
        }

        var start = _baseIndex + spanStart;
        var end = _baseIndex + spanEnd;
        var lineCount = _combiner.Combine(_peaks, _peakCounts, analysed, _adapter, start, end);
        frame.LineCount = lineCount;
        frame.EstimatedMainsHz = _attributor.Attribute(_combiner.Lines.AsSpan(0, lineCount));
        frame.StartSampleIndex = start;
        frame.EndSampleIndex = end;
        frame.AnalysedChannelCount = analysed;
        frame.StartUtc = _anchorUtc is { } anchor
            ? anchor.AddTicks((long)Math.Round((start - _anchorIndex) / _layout.SampleRateHz * TimeSpan.TicksPerSecond))
            : null;
        _sink?.OnFrame(frame);
    }

    // total[b] += add[b]; lane-wise, so the same bits as the plain loop.
    private static void AddInto(Span<double> total, ReadOnlySpan<double> add)
    {
        var b = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            ref var to = ref MemoryMarshal.GetReference(total);
            ref var from = ref MemoryMarshal.GetReference(add);
            for (; b <= total.Length - Vector256<double>.Count; b += Vector256<double>.Count)
            {
                (Vector256.LoadUnsafe(ref to, (nuint)b) + Vector256.LoadUnsafe(ref from, (nuint)b)).StoreUnsafe(ref to, (nuint)b);
            }
        }

        for (; b < total.Length; b++)
        {
            total[b] += add[b];
        }
    }

    // values[b] *= factor; lane-wise, so the same bits as the plain loop.
    private static void Scale(Span<double> values, double factor)
    {
        var b = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            ref var at = ref MemoryMarshal.GetReference(values);
            var f = Vector256.Create(factor);
            for (; b <= values.Length - Vector256<double>.Count; b += Vector256<double>.Count)
            {
                (Vector256.LoadUnsafe(ref at, (nuint)b) * f).StoreUnsafe(ref at, (nuint)b);
            }
        }

        for (; b < values.Length; b++)
        {
            values[b] *= factor;
        }
    }

    // Keeps the SlidingWelch callback and the segment view off the public surface.
    private sealed class WelchAdapter(StreamAnalyzer owner) : ISlidingWelchSink, ISpanSegments
    {
        public int SegmentCount => owner._welch.SegmentsPerSpan;

        public int SegmentLength => owner._welch.SegmentLength;

        public void OnSpan(SlidingWelch welch, long spanStartSample, long spanEndSample) => owner.OnSpan(welch, spanStartSample, spanEndSample);

        public ReadOnlySpan<double> Periodogram(int channel, int segment) => owner._welch.SegmentPeriodogram(channel, segment);

        public long SegmentStartSampleIndex(int segment) => owner._baseIndex + owner._welch.SegmentStartSample(segment);
    }
}
