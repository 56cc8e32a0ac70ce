using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using HumWatch.Core.Signals;
using HumWatch.Core.Spectra.Fft;

namespace HumWatch.Core.Faults;

/// <summary>
/// The per-block, per-channel sample statistics <see cref="FaultDetector"/> judges spans by, in a ring of blocks: sums
/// (relative to the block's first finite sample, so a large DC offset does not cancel the variance), counts of finite,
/// non-finite and at-limit samples, extremes with their counts, the last sample and the smallest step. The accumulation
/// runs once per channel group of any vector width (<see cref="ILaneLogic{TVec, TScalar}"/>); the one-channel loop is its
/// reference. Allocation-free after construction. Not thread-safe.
/// </summary>
internal sealed class BlockStatisticsRing
{
    private readonly int _channelCount;
    private readonly int _vectorBits;
    private readonly double[] _lowLimit;
    private readonly double[] _highLimit;

    /// <param name="layout">Channels and their declared ranges.</param>
    /// <param name="fallbackClipLevelUv">Clip level (µV, ±) for channels without a declared range; 0 = none.</param>
    /// <param name="ringBlocks">Blocks kept.</param>
    /// <param name="vectorBits">Channel group width in bits: 512, 256 or 0 (one channel at a time); a width the hardware does not accelerate still runs, emulated (tests).</param>
    public BlockStatisticsRing(StreamLayout layout, double fallbackClipLevelUv, int ringBlocks, int vectorBits)
    {
        _channelCount = layout.ChannelCount;
        _vectorBits = vectorBits;
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
            else if (fallbackClipLevelUv > 0)
            {
                _lowLimit[c] = -fallbackClipLevelUv;
                _highLimit[c] = fallbackClipLevelUv;
            }
        }

        var cells = ringBlocks * _channelCount;
        Reference = new double[cells];
        Sum = new double[cells];
        SumSquares = new double[cells];
        Finite = new int[cells];
        Clipped = new int[cells];
        NonFinite = new int[cells];
        Max = new double[cells];
        Min = new double[cells];
        AtMax = new int[cells];
        AtMin = new int[cells];
        Last = new double[cells];
        MinStep = new double[cells];
    }

    /// <summary>The width the detector uses in production: the widest the hardware accelerates.</summary>
    public static int WidestAccelerated => Vector512Lanes<double>.IsAccelerated ? 512 : Vector256Lanes<double>.IsAccelerated ? 256 : 0;

    // Per ring cell (slot × channel count + channel).
    public double[] Reference { get; }

    public double[] Sum { get; }

    public double[] SumSquares { get; }

    public int[] Finite { get; }

    public int[] Clipped { get; }

    public int[] NonFinite { get; }

    public double[] Max { get; }

    public double[] Min { get; }

    public int[] AtMax { get; }

    public int[] AtMin { get; }

    public double[] Last { get; }

    public double[] MinStep { get; }

    /// <summary>Empties the cells of every channel from <paramref name="baseCell"/> (a slot's first cell).</summary>
    public void ClearSlot(int baseCell)
    {
        for (var c = 0; c < _channelCount; c++)
        {
            var cell = baseCell + c;
            Reference[cell] = double.NaN;
            Sum[cell] = 0;
            SumSquares[cell] = 0;
            Finite[cell] = 0;
            Clipped[cell] = 0;
            NonFinite[cell] = 0;
            Max[cell] = double.NegativeInfinity;
            Min[cell] = double.PositiveInfinity;
            AtMax[cell] = 0;
            AtMin[cell] = 0;
            Last[cell] = double.NaN;
            MinStep[cell] = double.PositiveInfinity;
        }
    }

    /// <summary>
    /// Adds <paramref name="count"/> samples of every channel to the slot at <paramref name="baseCell"/>: channel c's
    /// samples start at <paramref name="first"/> + c·<paramref name="stride"/> in <paramref name="channelMajor"/>.
    /// </summary>
    public void Add(ReadOnlySpan<float> channelMajor, int first, int stride, int count, int baseCell)
    {
        var c = 0;
        if (_vectorBits == 512)
        {
            c = AddGroups<Vector512Lanes<double>, Vector512<double>>(channelMajor, first, stride, count, baseCell, c);
        }

        if (_vectorBits >= 256)
        {
            c = AddGroups<Vector256Lanes<double>, Vector256<double>>(channelMajor, first, stride, count, baseCell, c);
        }

        for (; c < _channelCount; c++)
        {
            Accumulate(channelMajor.Slice(first + (c * stride), count), baseCell + c, _lowLimit[c], _highLimit[c]);
        }
    }

    /// <summary>The raw statistics of <paramref name="cell"/> (for tests).</summary>
    public BlockStatistics Statistics(int cell) => new(
        Reference[cell], Sum[cell], SumSquares[cell], Finite[cell], Clipped[cell], NonFinite[cell],
        Max[cell], Min[cell], AtMax[cell], AtMin[cell], Last[cell], MinStep[cell]);

    private int AddGroups<TOps, TVec>(ReadOnlySpan<float> channelMajor, int first, int stride, int count, int baseCell, int c)
        where TOps : struct, ILaneLogic<TVec, double>
        where TVec : unmanaged
    {
        for (; c + TOps.Lanes <= _channelCount; c += TOps.Lanes)
        {
            AccumulateLanes<TOps, TVec>(channelMajor, first + (c * stride), stride, count, baseCell + c, c);
        }

        return c;
    }

    // The reference for the vector paths: one channel, one block (or the next part of it).
    private void Accumulate(ReadOnlySpan<float> samples, int cell, double low, double high)
    {
        var reference = Reference[cell];
        var sum = 0.0;
        var squares = 0.0;
        var finite = 0;
        var clipped = 0;
        var nonFinite = 0;
        var max = Max[cell];
        var min = Min[cell];
        var atMax = AtMax[cell];
        var atMin = AtMin[cell];
        var last = Last[cell];
        var minStep = MinStep[cell];
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

            if (v > max)
            {
                max = v;
                atMax = 1;
            }
            else if (v == max)
            {
                atMax++;
            }

            if (v < min)
            {
                min = v;
                atMin = 1;
            }
            else if (v == min)
            {
                atMin++;
            }

            // The block's first finite sample has no predecessor (last is NaN, so step is NaN and compares false).
            var step = Math.Abs(v - last);
            if (step > 0 && step < minStep)
            {
                minStep = step;
            }

            last = v;
        }

        Reference[cell] = reference;
        Sum[cell] += sum;
        SumSquares[cell] += squares;
        Finite[cell] += finite;
        Clipped[cell] += clipped;
        NonFinite[cell] += nonFinite;
        Max[cell] = max;
        Min[cell] = min;
        AtMax[cell] = atMax;
        AtMin[cell] = atMin;
        Last[cell] = last;
        MinStep[cell] = minStep;
    }

    // Accumulate for Lanes channels at once, one channel per lane: each lane runs exactly the scalar sequence (same
    // reference, same additions in sample order, the same comparisons for extremes and steps; a skipped non-finite
    // sample adds +0, which changes no sum because a sum that starts at +0 is never −0, and is masked out of every
    // comparison), so the statistics are bit-identical to one Accumulate call per channel. Channel c + j's samples start
    // at first + j·stride.
    private void AccumulateLanes<TOps, TVec>(ReadOnlySpan<float> channelMajor, int first, int stride, int count, int cell, int channel)
        where TOps : struct, ILaneLogic<TVec, double>
        where TVec : unmanaged
    {
        if (count > 0 && TryAccumulateFiniteLanes<TOps, TVec>(channelMajor, first, stride, count, cell, channel))
        {
            return;
        }

        ref var start = ref Unsafe.Add(ref MemoryMarshal.GetReference(channelMajor), first);
        var low = TOps.Load(in _lowLimit[channel]);
        var high = TOps.Load(in _highLimit[channel]);
        var (reference, max, min, last, minStep, atMax, atMin) = LoadLanes<TOps, TVec>(cell);
        var one = TOps.Splat(1);
        var zero = TOps.Splat(0);
        var sum = zero;
        var squares = zero;
        var finite = zero;
        var clipped = zero;
        var nonFinite = zero;
        var pending = !TOps.AllEqual(reference, reference);
        for (var i = 0; i < count; i++)
        {
            var v = TOps.WidenStrided(in Unsafe.Add(ref start, i), stride);
            var isFinite = TOps.Equal(TOps.Sub(v, v), zero);
            nonFinite = TOps.Add(nonFinite, TOps.AndNot(one, isFinite));
            if (pending)
            {
                // Until every lane has seen a finite sample; after that the references are fixed for the block.
                reference = TOps.Select(TOps.AndNot(isFinite, TOps.Equal(reference, reference)), v, reference);
                pending = !TOps.AllEqual(reference, reference);
            }

            var d = TOps.Sub(v, reference);
            var counted = TOps.And(one, isFinite);
            sum = TOps.Add(sum, TOps.And(d, isFinite));
            squares = TOps.Add(squares, TOps.And(TOps.Mul(d, d), isFinite));
            finite = TOps.Add(finite, counted);
            clipped = TOps.Add(clipped, TOps.And(counted, TOps.Or(TOps.LessOrEqual(v, low), TOps.GreaterOrEqual(v, high))));

            var above = TOps.And(TOps.Greater(v, max), isFinite);
            atMax = TOps.Select(above, one, TOps.Add(atMax, TOps.And(counted, TOps.Equal(v, max))));
            max = TOps.Select(above, v, max);
            var below = TOps.And(TOps.Less(v, min), isFinite);
            atMin = TOps.Select(below, one, TOps.Add(atMin, TOps.And(counted, TOps.Equal(v, min))));
            min = TOps.Select(below, v, min);

            var step = TOps.Abs(TOps.Sub(v, last));
            var smaller = TOps.And(isFinite, TOps.And(TOps.Greater(step, zero), TOps.Less(step, minStep)));
            minStep = TOps.Select(smaller, step, minStep);
            last = TOps.Select(isFinite, v, last);
        }

        StoreLanes<TOps, TVec>(cell, (reference, max, min, last, minStep, atMax, atMin), sum, squares, finite, clipped, nonFinite);
    }

    // AccumulateLanes for the common case, every sample finite: the same operations in the same order with the masks
    // left out (a mask of all lanes changes nothing), about a third fewer per sample. A lane whose reference is unset
    // takes its first sample, as the masked loop does when that sample is finite. Writes nothing and returns false when
    // a sample is not finite (v − v is then NaN, and so is the probe); the masked loop then does the call from the top.
    private bool TryAccumulateFiniteLanes<TOps, TVec>(ReadOnlySpan<float> channelMajor, int first, int stride, int count, int cell, int channel)
        where TOps : struct, ILaneLogic<TVec, double>
        where TVec : unmanaged
    {
        ref var start = ref Unsafe.Add(ref MemoryMarshal.GetReference(channelMajor), first);
        var low = TOps.Load(in _lowLimit[channel]);
        var high = TOps.Load(in _highLimit[channel]);
        var (reference, max, min, last, minStep, atMax, atMin) = LoadLanes<TOps, TVec>(cell);
        reference = TOps.Select(TOps.Equal(reference, reference), reference, TOps.WidenStrided(in start, stride));
        var one = TOps.Splat(1);
        var zero = TOps.Splat(0);
        var sum = zero;
        var squares = zero;
        var clipped = zero;
        var probe = zero;
        for (var i = 0; i < count; i++)
        {
            var v = TOps.WidenStrided(in Unsafe.Add(ref start, i), stride);
            probe = TOps.Add(probe, TOps.Sub(v, v));
            var d = TOps.Sub(v, reference);
            sum = TOps.Add(sum, d);
            squares = TOps.Add(squares, TOps.Mul(d, d));
            clipped = TOps.Add(clipped, TOps.And(one, TOps.Or(TOps.LessOrEqual(v, low), TOps.GreaterOrEqual(v, high))));

            var above = TOps.Greater(v, max);
            atMax = TOps.Select(above, one, TOps.Add(atMax, TOps.And(one, TOps.Equal(v, max))));
            max = TOps.Select(above, v, max);
            var below = TOps.Less(v, min);
            atMin = TOps.Select(below, one, TOps.Add(atMin, TOps.And(one, TOps.Equal(v, min))));
            min = TOps.Select(below, v, min);

            var step = TOps.Abs(TOps.Sub(v, last));
            var smaller = TOps.And(TOps.Greater(step, zero), TOps.Less(step, minStep));
            minStep = TOps.Select(smaller, step, minStep);
            last = v;
        }

        if (!TOps.AllEqual(probe, zero))
        {
            return false;
        }

        // Every sample counted as finite, none as not.
        StoreLanes<TOps, TVec>(cell, (reference, max, min, last, minStep, atMax, atMin), sum, squares, TOps.Splat(count), clipped, zero);
        return true;
    }

    // The running state of Lanes cells from cell on, one per lane: what both loops start from (once per call).
    private (TVec Reference, TVec Max, TVec Min, TVec Last, TVec MinStep, TVec AtMax, TVec AtMin) LoadLanes<TOps, TVec>(int cell)
        where TOps : struct, ILaneLogic<TVec, double>
        where TVec : unmanaged =>
        (TOps.Load(in Reference[cell]), TOps.Load(in Max[cell]), TOps.Load(in Min[cell]), TOps.Load(in Last[cell]),
            TOps.Load(in MinStep[cell]), Widen<TOps, TVec>(AtMax.AsSpan(cell)), Widen<TOps, TVec>(AtMin.AsSpan(cell)));

    // Writes back what LoadLanes read, with this call's sums and counts added.
    private void StoreLanes<TOps, TVec>(int cell, (TVec Reference, TVec Max, TVec Min, TVec Last, TVec MinStep, TVec AtMax, TVec AtMin) state, TVec sum, TVec squares, TVec finite, TVec clipped, TVec nonFinite)
        where TOps : struct, ILaneLogic<TVec, double>
        where TVec : unmanaged
    {
        TOps.Store(state.Reference, ref Reference[cell]);
        TOps.Store(state.Max, ref Max[cell]);
        TOps.Store(state.Min, ref Min[cell]);
        TOps.Store(state.Last, ref Last[cell]);
        TOps.Store(state.MinStep, ref MinStep[cell]);
        TOps.Store(TOps.Add(TOps.Load(in Sum[cell]), sum), ref Sum[cell]);
        TOps.Store(TOps.Add(TOps.Load(in SumSquares[cell]), squares), ref SumSquares[cell]);
        for (var j = 0; j < TOps.Lanes; j++)
        {
            Finite[cell + j] += (int)LanePacks.Get<TVec, double>(finite, j);
            Clipped[cell + j] += (int)LanePacks.Get<TVec, double>(clipped, j);
            NonFinite[cell + j] += (int)LanePacks.Get<TVec, double>(nonFinite, j);
            AtMax[cell + j] = (int)LanePacks.Get<TVec, double>(state.AtMax, j);
            AtMin[cell + j] = (int)LanePacks.Get<TVec, double>(state.AtMin, j);
        }
    }

    // Counts as doubles, one per lane (once per call, not per sample).
    private static TVec Widen<TOps, TVec>(ReadOnlySpan<int> counts)
        where TOps : struct, ILaneLogic<TVec, double>
        where TVec : unmanaged
    {
        var result = default(TVec);
        ref var lane = ref Unsafe.As<TVec, double>(ref result);
        for (var j = 0; j < TOps.Lanes; j++)
        {
            Unsafe.Add(ref lane, j) = counts[j];
        }

        return result;
    }
}

/// <summary>One ring cell's raw statistics (for tests).</summary>
internal readonly record struct BlockStatistics(
    double Reference,
    double Sum,
    double SumSquares,
    int Finite,
    int Clipped,
    int NonFinite,
    double Max,
    double Min,
    int AtMax,
    int AtMin,
    double Last,
    double MinStep);
