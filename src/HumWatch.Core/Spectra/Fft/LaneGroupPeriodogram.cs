using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace HumWatch.Core.Spectra.Fft;

/// <summary>The periodogram batch of one lane width and precision, as <see cref="FftPeriodogramKernel"/> holds it.</summary>
internal interface ILanePeriodogram<TScalar>
    where TScalar : unmanaged
{
    /// <summary>Channels per vector group.</summary>
    int Lanes { get; }

    /// <summary>
    /// Periodograms of <paramref name="channelCount"/> segments (arguments already checked, see
    /// <see cref="PeriodogramArguments"/>): segment c at <c>samples[c·sampleStride …]</c>, its row at <c>periodograms[c·BinCount …]</c>.
    /// </summary>
    void Compute(ReadOnlySpan<TScalar> samples, int channelCount, int sampleStride, Span<TScalar> periodograms);
}

/// <summary>
/// The FFT periodogram written once for every lane width (<typeparamref name="TOps"/>: 1, 4 or 8 channels per pack) and
/// precision (<typeparamref name="TScalar"/>: double or float). Channels go through in groups of <c>TOps.Lanes</c>, one
/// per lane (structure of arrays); a short last group fills its spare lanes with a copy of its first channel and
/// discards them. Even N: a real FFT as one N/2-point complex FFT of z[n] = x[2n] + i·x[2n+1] plus the split step; odd
/// N: one N-point complex FFT of the real input. Allocates nothing after construction. Not thread-safe.
/// </summary>
/// <remarks>
/// Load: square blocks of Lanes × Lanes samples (Lanes consecutive samples of each channel) are read sequentially into
/// the raw scratch and transposed in place, so raw[n] holds sample n of every lane; then detrend and window go into
/// digit-reversed order. Unload: the same in-place transpose turns Lanes bins × Lanes channels into Lanes bins of each
/// channel's row. Mean: float64 sums each lane in sample order (the scalar path's exact sequence, so the mean, and the
/// ill-conditioned DC bin after detrending, do not depend on the width); float32 sums the differences from each lane's
/// first sample in float32 blocks that go to float64, and subtracts the mean as a float32 high part plus a float32 low
/// part, so a large DC offset leaves no float32 rounding behind (that residue would land in bins 0 and 1).
/// </remarks>
internal sealed class LaneGroupPeriodogram<TOps, TVec, TScalar> : ILanePeriodogram<TScalar>
    where TOps : struct, ILaneOps<TVec, TScalar>
    where TVec : unmanaged
    where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
{
    // Float32 mean: samples per float32 block before the block's sum goes to float64 (differences from the first sample
    // are at noise scale, so eight of them round at noise scale too).
    private const int SingleSumBlock = 8;

    private readonly ComplexFftPlan _plan;
    private readonly TScalar[] _window;

    // Split-step twiddles (cos, −sin of 2πk/N) for k = 0 … M/2, even N only (PowerSteps.SplitTwiddles).
    private readonly TScalar[] _splitTwiddles;
    private readonly AlignedScratch<TScalar> _re;
    private readonly AlignedScratch<TScalar> _im;

    // Raw samples as lanes in natural order (raw[n] = sample n of every lane), before the detrended, windowed copy.
    private readonly AlignedScratch<TScalar> _raw;

    // Start of each lane's segment in the caller's samples for the current group (spare lanes repeat lane 0).
    private readonly int[] _laneStarts;
    private readonly double[] _laneSums;
    private readonly TScalar[] _meanHigh;
    private readonly TScalar[] _meanLow;
    private readonly TScalar _densityScale;
    private readonly int _segmentLength;
    private readonly int _binCount;
    private readonly bool _even;

    /// <summary>Tables for <paramref name="segmentLength"/> (checked by <see cref="PowerSteps.CheckKernelArguments"/>) at <paramref name="sampleRateHz"/>; scratch <paramref name="misalignBytes"/> off the 64-byte line.</summary>
    public LaneGroupPeriodogram(int segmentLength, double sampleRateHz, int misalignBytes)
    {
        _segmentLength = segmentLength;
        _binCount = (segmentLength / 2) + 1;
        _even = (segmentLength & 1) == 0;
        var m = _even ? segmentLength / 2 : segmentLength;
        _plan = ComplexFftPlan.Get(m);

        // Tables are made in float64 and rounded once, so both precisions share one definition.
        _window = PowerSteps.Round<TScalar>(PowerSteps.Window(segmentLength, sampleRateHz, out var densityScale));
        _densityScale = TScalar.CreateTruncating(densityScale);
        _splitTwiddles = PowerSteps.Round<TScalar>(PowerSteps.SplitTwiddles(segmentLength));

        var lanes = TOps.Lanes;
        _re = new AlignedScratch<TScalar>(m * lanes, misalignBytes);
        _im = new AlignedScratch<TScalar>(m * lanes, misalignBytes);
        _raw = new AlignedScratch<TScalar>(segmentLength * lanes, misalignBytes);
        _laneStarts = new int[lanes];
        _laneSums = new double[lanes];
        _meanHigh = new TScalar[lanes];
        _meanLow = new TScalar[lanes];
    }

    /// <inheritdoc/>
    public int Lanes => TOps.Lanes;

    /// <inheritdoc/>
    public void Compute(ReadOnlySpan<TScalar> samples, int channelCount, int sampleStride, Span<TScalar> periodograms)
    {
        var lanes = TOps.Lanes;
        var bins = _binCount;
        for (var first = 0; first < channelCount; first += lanes)
        {
            var count = Math.Min(lanes, channelCount - first);
            for (var lane = 0; lane < lanes; lane++)
            {
                _laneStarts[lane] = (first + (lane < count ? lane : 0)) * sampleStride;
            }

            Load(samples);
            Transform();
            Unload(count, periodograms.Slice(first * bins, count * bins));
        }
    }

    private static bool IsSingle => typeof(TScalar) == typeof(float);

    private void Load(ReadOnlySpan<TScalar> samples)
    {
        var lanes = TOps.Lanes;
        var n = _segmentLength;
        var raw = MemoryMarshal.Cast<TScalar, TVec>(_raw.Span);
        var rawValues = _raw.Span;
        var starts = _laneStarts.AsSpan();
        ref var origin = ref MemoryMarshal.GetReference(samples);

        // Pass 1, sequential: one pack of each lane's consecutive samples per square, transposed in place; the float64
        // sum runs along (in sample order), so its chain of additions overlaps the loads.
        var squares = n / lanes * lanes;
        var sum = TOps.Splat(TScalar.Zero);
        for (var at = 0; at < squares; at += lanes)
        {
            var square = raw.Slice(at, lanes);
            for (var lane = 0; lane < lanes; lane++)
            {
                square[lane] = TOps.Load(in Unsafe.Add(ref origin, starts[lane] + at));
            }

            LanePacks.Transpose<TOps, TVec, TScalar>(square);
            for (var lane = 0; lane < lanes && !IsSingle; lane++)
            {
                sum = TOps.Add(sum, square[lane]);
            }
        }

        for (var at = squares; at < n; at++)
        {
            for (var lane = 0; lane < lanes; lane++)
            {
                rawValues[(at * lanes) + lane] = samples[starts[lane] + at];
            }

            sum = IsSingle ? sum : TOps.Add(sum, raw[at]);
        }

        Means(raw, sum);

        // Pass 2: detrend and window into digit-reversed order (whole-pack reads, sequential writes).
        var re = MemoryMarshal.Cast<TScalar, TVec>(_re.Span);
        var im = MemoryMarshal.Cast<TScalar, TVec>(_im.Span);
        var window = _window.AsSpan();
        var permutation = _plan.Permutation;
        var high = TOps.Load(in _meanHigh[0]);
        var low = TOps.Load(in _meanLow[0]);
        if (!_even)
        {
            // Odd N: the real samples alone, imaginary parts zero.
            for (var p = 0; p < permutation.Length; p++)
            {
                var e = permutation[p];
                re[p] = Detrend(raw[e], high, low, window[e]);
                im[p] = TOps.Splat(TScalar.Zero);
            }

            return;
        }

        for (var p = 0; p < permutation.Length; p++)
        {
            var e = 2 * permutation[p];
            re[p] = Detrend(raw[e], high, low, window[e]);
            im[p] = Detrend(raw[e + 1], high, low, window[e + 1]);
        }
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static TVec Detrend(TVec x, TVec high, TVec low, TScalar window)
    {
        // Float64 has no low part (it is 0): skip the subtraction, which the JIT removes for double.
        var centred = IsSingle ? TOps.Sub(TOps.Sub(x, high), low) : TOps.Sub(x, high);
        return TOps.Mul(centred, TOps.Splat(window));
    }

    // Per-lane segment means into _meanHigh/_meanLow: float64 from the sum of pass 1, float32 from the transposed raw samples.
    private void Means(ReadOnlySpan<TVec> raw, TVec sum)
    {
        var lanes = TOps.Lanes;
        var n = _segmentLength;
        if (!IsSingle)
        {
            var divisor = TOps.Splat(TScalar.CreateTruncating(n));
            TOps.Store(DivideLanes(sum, divisor), ref _meanHigh[0]);
            Array.Clear(_meanLow);
            return;
        }

        var pivot = raw[0];
        var sums = _laneSums.AsSpan();
        sums.Clear();
        for (var start = 0; start < n; start += SingleSumBlock)
        {
            var end = Math.Min(n, start + SingleSumBlock);
            var block = TOps.Sub(raw[start], pivot);
            for (var i = start + 1; i < end; i++)
            {
                block = TOps.Add(block, TOps.Sub(raw[i], pivot));
            }

            for (var lane = 0; lane < lanes; lane++)
            {
                sums[lane] += double.CreateTruncating(LanePacks.Get<TVec, TScalar>(block, lane));
            }
        }

        for (var lane = 0; lane < lanes; lane++)
        {
            var mean = (sums[lane] / n) + double.CreateTruncating(LanePacks.Get<TVec, TScalar>(pivot, lane));
            var high = TScalar.CreateTruncating(mean);
            _meanHigh[lane] = high;
            _meanLow[lane] = TScalar.CreateTruncating(mean - double.CreateTruncating(high));
        }
    }

    // sum / divisor lane by lane (ILaneOps has no division; this runs once per group).
    private static TVec DivideLanes(TVec sum, TVec divisor)
    {
        var result = sum;
        ref var r = ref Unsafe.As<TVec, TScalar>(ref result);
        var d = LanePacks.Get<TVec, TScalar>(divisor, 0);
        for (var lane = 0; lane < TOps.Lanes; lane++)
        {
            Unsafe.Add(ref r, lane) /= d;
        }

        return result;
    }

    /// <summary>FFT, then scaled power per bin back into the scratch: bin k (k &lt; M) at re[k]; for even N, bin M at im[0].</summary>
    private void Transform()
    {
        var re = MemoryMarshal.Cast<TScalar, TVec>(_re.Span);
        var im = MemoryMarshal.Cast<TScalar, TVec>(_im.Span);
        _plan.Forward<TOps, TVec, TScalar>(re, im);
        if (_even)
        {
            PowerSteps.Split<TOps, TVec, TScalar>(re, im, _plan.Length, _splitTwiddles, _densityScale);
        }
        else
        {
            PowerSteps.Odd<TOps, TVec, TScalar>(re, im, _binCount, _densityScale);
        }
    }

    /// <summary>Copies lanes 0 … <paramref name="count"/> − 1 of the power in the scratch into consecutive output rows.</summary>
    private void Unload(int count, Span<TScalar> rows)
    {
        var lanes = TOps.Lanes;
        var bins = _binCount;
        var re = _re.Span;
        var im = _im.Span;

        // Bins stored in re: all M for even N (bin M is in im[0]); all (N+1)/2 for odd N.
        var fromRe = _even ? bins - 1 : bins;
        var done = 0;
        if (count == lanes && lanes > 1)
        {
            // Full group: transposing Lanes bins × Lanes channels in place gives Lanes bins of each channel's row.
            var packs = MemoryMarshal.Cast<TScalar, TVec>(re);
            for (; done + lanes <= fromRe; done += lanes)
            {
                var square = packs.Slice(done, lanes);
                LanePacks.Transpose<TOps, TVec, TScalar>(square);
                for (var c = 0; c < lanes; c++)
                {
                    TOps.Store(square[c], ref rows[(c * bins) + done]);
                }
            }
        }

        for (var c = 0; c < count; c++)
        {
            var row = rows.Slice(c * bins, bins);
            for (var k = done; k < fromRe; k++)
            {
                row[k] = re[(k * lanes) + c];
            }

            if (_even)
            {
                row[bins - 1] = im[c];
            }
        }
    }
}
