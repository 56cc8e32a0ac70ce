using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;
using HumWatch.Core.Signals;

namespace HumWatch.Core.Faults;

/// <summary>
/// Time-domain channel checks over each analysis span: flat, clipped, non-finite. Keeps per-block statistics per
/// channel in a ring (block = gcd(span, hop) samples, one hop in the default settings) so each span's verdict is a sum
/// over whole blocks. Allocation-free after construction. Not thread-safe.
/// </summary>
/// <remarks>
/// Flat is judged per block, not over the whole span: an electrode that comes off for one hop of an 8 s span still
/// moves over the span as a whole (the part before it fell off), yet that part of the span carries no signal and would
/// distort the channel's spectrum. Any flat block therefore marks the channel flat for the span (Fraction = share of
/// flat blocks). Clipped likewise: a block with at least ClippedFraction of its samples at the range limits marks the
/// span (Fraction = share of the span's samples at the limits). Non-finite: any NaN/∞ in the span.
/// </remarks>
internal sealed class FaultDetector
{
    // Sums are kept relative to the block's first finite sample so a large DC offset does not cancel the variance.
    private readonly int _channelCount;
    private readonly int _blockSamples;
    private readonly int _ringBlocks;
    private readonly double _flatStdDevUv;
    private readonly double _clippedFraction;
    private readonly double[] _lowLimit;
    private readonly double[] _highLimit;
    private readonly double[] _reference;
    private readonly double[] _sum;
    private readonly double[] _sumSquares;
    private readonly int[] _finite;
    private readonly int[] _clipped;
    private readonly int[] _nonFinite;
    private long _position;

    /// <param name="layout">Channels and their ranges (for clipping).</param>
    /// <param name="options">Thresholds (validated by the caller).</param>
    /// <param name="spanSamples">Samples per analysis span.</param>
    /// <param name="hopSamples">Samples between spans; also the largest block the caller appends between evaluations.</param>
    public FaultDetector(StreamLayout layout, FaultOptions options, int spanSamples, int hopSamples)
    {
        ArgumentNullException.ThrowIfNull(layout);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentOutOfRangeException.ThrowIfLessThan(spanSamples, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(hopSamples, 1);
        _channelCount = layout.ChannelCount;
        _blockSamples = Gcd(spanSamples, hopSamples);
        _ringBlocks = (spanSamples / _blockSamples) + (hopSamples / _blockSamples) + 1;
        _flatStdDevUv = options.FlatStdDevUv;
        _clippedFraction = options.ClippedFraction;
        _lowLimit = new double[_channelCount];
        _highLimit = new double[_channelCount];
        for (var c = 0; c < _channelCount; c++)
        {
            var info = layout.Channels[c];
            _lowLimit[c] = double.NegativeInfinity;
            _highLimit[c] = double.PositiveInfinity;
            if (info.RangeMinUv is { } min && info.RangeMaxUv is { } max && max > min)
            {
                // About one LSB of slack: values that round-tripped through float32 still count as at the limit.
                var slack = 1e-6 * (max - min);
                _lowLimit[c] = min + slack;
                _highLimit[c] = max - slack;
            }
            else if (options.FallbackClipLevelUv > 0)
            {
                _lowLimit[c] = -options.FallbackClipLevelUv;
                _highLimit[c] = options.FallbackClipLevelUv;
            }
        }

        var cells = _ringBlocks * _channelCount;
        _reference = new double[cells];
        _sum = new double[cells];
        _sumSquares = new double[cells];
        _finite = new int[cells];
        _clipped = new int[cells];
        _nonFinite = new int[cells];
    }

    /// <summary>Samples per statistics block.</summary>
    public int BlockSamples => _blockSamples;

    /// <summary>Most faults one evaluation can report (three kinds per channel).</summary>
    public int Capacity => 3 * _channelCount;

    /// <summary>Adds the next contiguous samples (channel-major, indices continue since the last Reset).</summary>
    public void Append(ReadOnlySpan<float> channelMajor, int samplesPerChannel)
    {
        if (channelMajor.Length < (long)samplesPerChannel * _channelCount)
        {
            throw new ArgumentException($"Block must hold {_channelCount} channels × {samplesPerChannel} samples.", nameof(channelMajor));
        }

        var offset = 0;
        while (offset < samplesPerChannel)
        {
            var absolute = _position + offset;
            var inBlock = (int)(absolute % _blockSamples);
            var take = Math.Min(samplesPerChannel - offset, _blockSamples - inBlock);
            var slot = (int)((absolute / _blockSamples) % _ringBlocks);
            var baseCell = slot * _channelCount;
            if (inBlock == 0)
            {
                ClearSlot(baseCell);
            }

            var c = 0;
            if (Avx512F.IsSupported && Avx2.IsSupported)
            {
                for (; c + Vector512<double>.Count <= _channelCount; c += Vector512<double>.Count)
                {
                    AccumulateEight(channelMajor, (c * samplesPerChannel) + offset, samplesPerChannel, take, baseCell + c, c);
                }
            }

            if (Vector256.IsHardwareAccelerated)
            {
                for (; c + Vector256<double>.Count <= _channelCount; c += Vector256<double>.Count)
                {
                    AccumulateFour(channelMajor, (c * samplesPerChannel) + offset, samplesPerChannel, take, baseCell + c, c);
                }
            }

            for (; c < _channelCount; c++)
            {
                Accumulate(channelMajor.Slice((c * samplesPerChannel) + offset, take), baseCell + c, _lowLimit[c], _highLimit[c]);
            }

            offset += take;
        }

        _position += samplesPerChannel;
    }

    /// <summary>Blocks in the statistics ring.</summary>
    internal int RingBlocks => _ringBlocks;

    /// <summary>The raw statistics held in ring slot <paramref name="slot"/> for <paramref name="channel"/> (for tests).</summary>
    internal (double Reference, double Sum, double SumSquares, int Finite, int Clipped, int NonFinite) SlotStatistics(int slot, int channel)
    {
        var cell = (slot * _channelCount) + channel;
        return (_reference[cell], _sum[cell], _sumSquares[cell], _finite[cell], _clipped[cell], _nonFinite[cell]);
    }

    /// <summary>Forgets everything; sample indices restart at 0.</summary>
    public void Reset()
    {
        _position = 0;
    }

    /// <summary>
    /// Judges the span [<paramref name="spanStart"/>, <paramref name="spanEnd"/>) (indices since Reset, block-aligned,
    /// within the last span + hop samples appended). Writes faults in channel order and marks channels to leave out of
    /// line finding (flat or non-finite). Returns the number of faults.
    /// </summary>
    public int Evaluate(long spanStart, long spanEnd, Span<ChannelFault> faults, Span<bool> excluded)
    {
        if (spanStart % _blockSamples != 0 || spanEnd % _blockSamples != 0 || spanEnd <= spanStart || spanEnd > _position
            || (_position - spanStart) > (long)_ringBlocks * _blockSamples)
        {
            throw new ArgumentOutOfRangeException(nameof(spanStart), spanStart, $"Span [{spanStart}, {spanEnd}) must be block-aligned ({_blockSamples}) and within the last {(long)_ringBlocks * _blockSamples} samples appended (now at {_position}).");
        }

        if (faults.Length < Capacity || excluded.Length < _channelCount)
        {
            throw new ArgumentException($"Buffers must hold {Capacity} faults and {_channelCount} flags.", nameof(faults));
        }

        var firstBlock = spanStart / _blockSamples;
        var blocks = (int)((spanEnd - spanStart) / _blockSamples);
        var spanSamples = (double)(spanEnd - spanStart);
        var count = 0;
        for (var c = 0; c < _channelCount; c++)
        {
            var flatBlocks = 0;
            var clippedBlocks = 0;
            long clipped = 0;
            long nonFinite = 0;
            for (var b = 0; b < blocks; b++)
            {
                var cell = ((int)((firstBlock + b) % _ringBlocks) * _channelCount) + c;
                var n = _finite[cell];
                clipped += _clipped[cell];
                nonFinite += _nonFinite[cell];
                if ((double)_clipped[cell] / _blockSamples >= _clippedFraction)
                {
                    clippedBlocks++;
                }

                if (n >= 2)
                {
                    var mean = _sum[cell] / n;
                    var variance = Math.Max(0, (_sumSquares[cell] / n) - (mean * mean));
                    if (Math.Sqrt(variance) < _flatStdDevUv)
                    {
                        flatBlocks++;
                    }
                }
            }

            if (flatBlocks > 0)
            {
                faults[count++] = new ChannelFault(c, ChannelFaultKind.Flat, (double)flatBlocks / blocks);
            }

            if (clippedBlocks > 0)
            {
                faults[count++] = new ChannelFault(c, ChannelFaultKind.Clipped, clipped / spanSamples);
            }

            if (nonFinite > 0)
            {
                faults[count++] = new ChannelFault(c, ChannelFaultKind.NonFinite, nonFinite / spanSamples);
            }

            excluded[c] = flatBlocks > 0 || nonFinite > 0;
        }

        return count;
    }

    private void ClearSlot(int baseCell)
    {
        for (var c = 0; c < _channelCount; c++)
        {
            var cell = baseCell + c;
            _reference[cell] = double.NaN;
            _sum[cell] = 0;
            _sumSquares[cell] = 0;
            _finite[cell] = 0;
            _clipped[cell] = 0;
            _nonFinite[cell] = 0;
        }
    }

    private void Accumulate(ReadOnlySpan<float> samples, int cell, double low, double high)
    {
        var reference = _reference[cell];
        var sum = 0.0;
        var squares = 0.0;
        var finite = 0;
        var clipped = 0;
        var nonFinite = 0;
        for (var i = 0; i < samples.Length; i++)
        {
            double v = samples[i];
            if (!double.IsFinite(v))
            {
                nonFinite++;
                continue;
            }

            if (double.IsNaN(reference))
            {
                reference = v;
            }

            var d = v - reference;
            sum += d;
            squares += d * d;
            finite++;
            if (v <= low || v >= high)
            {
                clipped++;
            }
        }

        _reference[cell] = reference;
        _sum[cell] += sum;
        _sumSquares[cell] += squares;
        _finite[cell] += finite;
        _clipped[cell] += clipped;
        _nonFinite[cell] += nonFinite;
    }

    // Accumulate for four channels at once, one channel per lane: each lane runs exactly the scalar sequence (same
    // reference, same additions in sample order; a skipped non-finite sample adds +0, which changes no sum because a
    // sum that starts at +0 is never −0), so the statistics are bit-identical to four Accumulate calls.
    // Channel c + j's samples start at first + j·stride.
    private void AccumulateFour(ReadOnlySpan<float> channelMajor, int first, int stride, int count, int cell, int channel)
    {
        ref var s0 = ref Unsafe.Add(ref MemoryMarshal.GetReference(channelMajor), first);
        ref var s1 = ref Unsafe.Add(ref s0, stride);
        ref var s2 = ref Unsafe.Add(ref s1, stride);
        ref var s3 = ref Unsafe.Add(ref s2, stride);
        var low = Vector256.LoadUnsafe(ref MemoryMarshal.GetArrayDataReference(_lowLimit), (nuint)channel);
        var high = Vector256.LoadUnsafe(ref MemoryMarshal.GetArrayDataReference(_highLimit), (nuint)channel);
        ref var referenceAt = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_reference), cell);
        var reference = Vector256.LoadUnsafe(ref referenceAt);
        var one = Vector256<double>.One;
        var sum = Vector256<double>.Zero;
        var squares = Vector256<double>.Zero;
        var finite = Vector256<double>.Zero;
        var clipped = Vector256<double>.Zero;
        var nonFinite = Vector256<double>.Zero;
        var pending = !Vector256.EqualsAll(reference, reference);
        for (var i = 0; i < count; i++)
        {
            var v = Vector256.Create((double)Unsafe.Add(ref s0, i), Unsafe.Add(ref s1, i), Unsafe.Add(ref s2, i), Unsafe.Add(ref s3, i));
            var isFinite = Vector256.Equals(v - v, Vector256<double>.Zero);
            nonFinite += Vector256.AndNot(one, isFinite);
            if (pending)
            {
                // Until every lane has seen a finite sample; after that the references are fixed for the block.
                reference = Vector256.ConditionalSelect(Vector256.AndNot(isFinite, Vector256.Equals(reference, reference)), v, reference);
                pending = !Vector256.EqualsAll(reference, reference);
            }

            var d = v - reference;
            sum += d & isFinite;
            squares += (d * d) & isFinite;
            finite += one & isFinite;
            clipped += one & isFinite & (Vector256.LessThanOrEqual(v, low) | Vector256.GreaterThanOrEqual(v, high));
        }

        reference.StoreUnsafe(ref referenceAt);
        ref var sumAt = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_sum), cell);
        (Vector256.LoadUnsafe(ref sumAt) + sum).StoreUnsafe(ref sumAt);
        ref var squaresAt = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_sumSquares), cell);
        (Vector256.LoadUnsafe(ref squaresAt) + squares).StoreUnsafe(ref squaresAt);
        for (var j = 0; j < Vector256<double>.Count; j++)
        {
            _finite[cell + j] += (int)finite.GetElement(j);
            _clipped[cell + j] += (int)clipped.GetElement(j);
            _nonFinite[cell + j] += (int)nonFinite.GetElement(j);
        }
    }

    // As AccumulateFour for eight channels: one gather fetches sample i of all eight, then 512-bit lanes.
    private unsafe void AccumulateEight(ReadOnlySpan<float> channelMajor, int first, int stride, int count, int cell, int channel)
    {
        if ((long)stride * (Vector512<double>.Count - 1) > int.MaxValue)
        {
            for (var j = 0; j < Vector512<double>.Count; j++)
            {
                var c = channel + j;
                Accumulate(channelMajor.Slice(first + (j * stride), count), cell + j, _lowLimit[c], _highLimit[c]);
            }

            return;
        }

        var lanes = Vector256.Create(0, stride, 2 * stride, 3 * stride, 4 * stride, 5 * stride, 6 * stride, 7 * stride);
        var low = Vector512.LoadUnsafe(ref MemoryMarshal.GetArrayDataReference(_lowLimit), (nuint)channel);
        var high = Vector512.LoadUnsafe(ref MemoryMarshal.GetArrayDataReference(_highLimit), (nuint)channel);
        ref var referenceAt = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_reference), cell);
        var reference = Vector512.LoadUnsafe(ref referenceAt);
        var one = Vector512<double>.One;
        var sum = Vector512<double>.Zero;
        var squares = Vector512<double>.Zero;
        var finite = Vector512<double>.Zero;
        var clipped = Vector512<double>.Zero;
        var nonFinite = Vector512<double>.Zero;
        var pending = !Vector512.EqualsAll(reference, reference);
        fixed (float* start = channelMajor)
        {
            var at = start + first;
            for (var i = 0; i < count; i++)
            {
                var v = Avx512F.ConvertToVector512Double(Avx2.GatherVector256(at + i, lanes, 4));
                var isFinite = Vector512.Equals(v - v, Vector512<double>.Zero);
                nonFinite += Vector512.AndNot(one, isFinite);
                if (pending)
                {
                    // Until every lane has seen a finite sample; after that the references are fixed for the block.
                    reference = Vector512.ConditionalSelect(Vector512.AndNot(isFinite, Vector512.Equals(reference, reference)), v, reference);
                    pending = !Vector512.EqualsAll(reference, reference);
                }

                var d = v - reference;
                sum += d & isFinite;
                squares += (d * d) & isFinite;
                finite += one & isFinite;
                clipped += one & isFinite & (Vector512.LessThanOrEqual(v, low) | Vector512.GreaterThanOrEqual(v, high));
            }
        }

        reference.StoreUnsafe(ref referenceAt);
        ref var sumAt = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_sum), cell);
        (Vector512.LoadUnsafe(ref sumAt) + sum).StoreUnsafe(ref sumAt);
        ref var squaresAt = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_sumSquares), cell);
        (Vector512.LoadUnsafe(ref squaresAt) + squares).StoreUnsafe(ref squaresAt);
        for (var j = 0; j < Vector512<double>.Count; j++)
        {
            _finite[cell + j] += (int)finite.GetElement(j);
            _clipped[cell + j] += (int)clipped.GetElement(j);
            _nonFinite[cell + j] += (int)nonFinite.GetElement(j);
        }
    }

    private static int Gcd(int a, int b)
    {
        while (b != 0)
        {
            (a, b) = (b, a % b);
        }

        return a;
    }
}
