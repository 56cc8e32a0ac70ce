using System.Collections.Concurrent;
using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace HumWatch.Core.Spectra.Fft;

/// <summary>
/// Immutable plan for an unscaled forward complex DFT, X[k] = Σ x[n]·e^(−2πi·nk/M), of a 2·3·5-smooth length M:
/// iterative decimation in time with radix-4, 2, 3 and 5 stages. Input is loaded in digit-reversed order
/// (<see cref="Permutation"/>), so the stages run in place and the output comes out in natural order.
/// Plans are cached per length (<see cref="Get"/>) and shared between threads; they hold no mutable state.
/// </summary>
internal sealed class ComplexFftPlan
{
    private static readonly ConcurrentDictionary<int, ComplexFftPlan> Cache = new();

    private static readonly double Sin2Pi5 = Math.Sin(2 * Math.PI / 5);
    private static readonly double Sin4Pi5 = Math.Sin(4 * Math.PI / 5);
    private static readonly double Cos2Pi5 = Math.Cos(2 * Math.PI / 5);
    private static readonly double Cos4Pi5 = Math.Cos(4 * Math.PI / 5);
    private static readonly double HalfSqrt3 = Math.Sqrt(3) / 2;

    private readonly int[] _radices;

    // All stages' twiddles, (cos, sin) pairs of e^(−2πi·qj/L): stage s, sub-transform offset j, q = 1 … r − 1.
    private readonly double[] _twiddles;

    // The same table rounded to float32, for the float32 instantiation of the stages (each entry within half an ulp of the
    // float64 value); the product runs float64, the benchmarks compare both.
    private readonly float[] _twiddlesSingle;
    private readonly int[] _twiddleOffsets;
    private readonly int[] _permutation;

    private ComplexFftPlan(int length)
    {
        Length = length;
        _radices = Factor(length);
        _permutation = new int[length];
        for (var p = 0; p < length; p++)
        {
            // Output position p of the digit-reversed load takes input index Σ digit·stride, last stage's radix first:
            // DIT splits x into r_last interleaved subsequences stored one after another, then recurses.
            var rest = p;
            var span = length;
            var stride = 1;
            var index = 0;
            for (var s = _radices.Length - 1; s >= 0; s--)
            {
                var r = _radices[s];
                span /= r;
                index += rest / span * stride;
                rest %= span;
                stride *= r;
            }

            _permutation[p] = index;
        }

        _twiddleOffsets = new int[_radices.Length];
        var total = 0;
        var subLength = 1;
        for (var s = 0; s < _radices.Length; s++)
        {
            _twiddleOffsets[s] = total;
            total += 2 * subLength * (_radices[s] - 1);
            subLength *= _radices[s];
        }

        _twiddles = new double[total];
        subLength = 1;
        for (var s = 0; s < _radices.Length; s++)
        {
            var r = _radices[s];
            var l = subLength * r;
            var offset = _twiddleOffsets[s];
            for (var j = 0; j < subLength; j++)
            {
                for (var q = 1; q < r; q++)
                {
                    // Reduce the exponent exactly in integers before going to floating point.
                    var k = (long)q * j % l;
                    var angle = -2 * Math.PI * k / l;
                    var at = offset + (2 * ((j * (r - 1)) + q - 1));
                    _twiddles[at] = Math.Cos(angle);
                    _twiddles[at + 1] = Math.Sin(angle);
                }
            }

            subLength = l;
        }

        _twiddlesSingle = new float[total];
        for (var i = 0; i < total; i++)
        {
            _twiddlesSingle[i] = (float)_twiddles[i];
        }
    }

    /// <summary>Transform length M.</summary>
    public int Length { get; }

    /// <summary>Stage radices, first stage first (each 2, 3, 4 or 5).</summary>
    public ReadOnlySpan<int> Radices => _radices;

    /// <summary>Position p of the stage input holds x[Permutation[p]].</summary>
    public ReadOnlySpan<int> Permutation => _permutation;

    /// <summary>True when <paramref name="length"/> (≥ 1) has no prime factor other than 2, 3 and 5.</summary>
    public static bool Supports(int length)
    {
        if (length < 1)
        {
            return false;
        }

        foreach (var p in (ReadOnlySpan<int>)[2, 3, 5])
        {
            while (length % p == 0)
            {
                length /= p;
            }
        }

        return length == 1;
    }

    /// <summary>The shared plan for <paramref name="length"/> (2·3·5-smooth, ≥ 1).</summary>
    public static ComplexFftPlan Get(int length)
    {
        if (!Supports(length))
        {
            throw new ArgumentOutOfRangeException(nameof(length), length, "FFT length must be ≥ 1 with no prime factor other than 2, 3 and 5.");
        }

        return Cache.GetOrAdd(length, static m => new ComplexFftPlan(m));
    }

    /// <summary>
    /// Runs all stages in place on split-complex data already loaded in <see cref="Permutation"/> order;
    /// each element is one lane pack (1, 4 or 8 channels) of <typeparamref name="TScalar"/> (double or float). Output in
    /// natural order, unscaled.
    /// </summary>
    public void Forward<TOps, TVec, TScalar>(Span<TVec> re, Span<TVec> im)
        where TOps : struct, ILaneOps<TVec, TScalar>
        where TVec : struct
        where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
    {
        if (re.Length < Length || im.Length < Length)
        {
            throw new ArgumentException($"FFT of length {Length} needs {Length} values per part (got {re.Length} and {im.Length}).", nameof(re));
        }

        re = re[..Length];
        im = im[..Length];
        var subLength = 1;
        for (var s = 0; s < _radices.Length; s++)
        {
            var r = _radices[s];
            var twiddles = Twiddles<TScalar>().Slice(_twiddleOffsets[s], 2 * subLength * (r - 1));
            Stages<TOps, TVec, TScalar>.Stage(re, im, subLength, r, subLength > 1 ? twiddles : default);
            subLength *= r;
        }
    }

    /// <summary>The whole twiddle table in <typeparamref name="TScalar"/>; the type test is resolved when the JIT specialises.</summary>
    private ReadOnlySpan<TScalar> Twiddles<TScalar>()
        where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
    {
        if (typeof(TScalar) == typeof(float))
        {
            return MemoryMarshal.Cast<float, TScalar>(_twiddlesSingle);
        }

        return MemoryMarshal.Cast<double, TScalar>(_twiddles);
    }

    private static int[] Factor(int length)
    {
        // Radix-4 first (cheapest per point, and the first stage needs no twiddles), then 2, 3, 5.
        var radices = new List<int>();
        foreach (var radix in (ReadOnlySpan<int>)[4, 2, 3, 5])
        {
            while (length % radix == 0)
            {
                radices.Add(radix);
                length /= radix;
            }
        }

        return radices.ToArray();
    }

    /// <summary>The stage loop and butterflies for one lane type and precision (constraints once, on the class).</summary>
    private static class Stages<TOps, TVec, TScalar>
        where TOps : struct, ILaneOps<TVec, TScalar>
        where TVec : struct
        where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
    {
        // Element i of the stage input, times twiddle (wr, wi) = twiddles[t], twiddles[t + 1] unless this is the first stage
        // (sub-transforms of length 1 need none).
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static void Load(Span<TVec> re, Span<TVec> im, int i, ReadOnlySpan<TScalar> twiddles, int t, out TVec xr, out TVec xi)
        {
            xr = re[i];
            xi = im[i];
            if (twiddles.Length > 0)
            {
                LanePacks.MultiplyByTwiddle<TOps, TVec, TScalar>(ref xr, ref xi, twiddles[t], twiddles[t + 1]);
            }
        }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static void Store(Span<TVec> re, Span<TVec> im, int i, TVec xr, TVec xi)
        {
            re[i] = xr;
            im[i] = xi;
        }

        // One stage: sub-transforms of length subLength are combined r at a time; butterfly j of each block of r·subLength
        // takes elements j, j + subLength, … (r of them) and twiddles 1 … r − 1 of offset j (none on the first stage).
        public static void Stage(Span<TVec> re, Span<TVec> im, int subLength, int r, ReadOnlySpan<TScalar> twiddles)
        {
            var n = re.Length;
            var l = subLength * r;
            for (var b = 0; b < n; b += l)
            {
                for (var j = 0; j < subLength; j++)
                {
                    var i0 = b + j;
                    var t = 2 * (r - 1) * j;
                    switch (r)
                    {
                        case 4:
                            Radix4(re, im, i0, subLength, twiddles, t);
                            break;
                        case 2:
                            Radix2(re, im, i0, subLength, twiddles, t);
                            break;
                        case 3:
                            Radix3(re, im, i0, subLength, twiddles, t);
                            break;
                        default:
                            Radix5(re, im, i0, subLength, twiddles, t);
                            break;
                    }
                }
            }
        }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static void Radix2(Span<TVec> re, Span<TVec> im, int i0, int stride, ReadOnlySpan<TScalar> twiddles, int t)
        {
            Load(re, im, i0 + stride, twiddles, t, out var a1r, out var a1i);
            var a0r = re[i0];
            var a0i = im[i0];
            Store(re, im, i0, TOps.Add(a0r, a1r), TOps.Add(a0i, a1i));
            Store(re, im, i0 + stride, TOps.Sub(a0r, a1r), TOps.Sub(a0i, a1i));
        }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static void Radix4(Span<TVec> re, Span<TVec> im, int i0, int stride, ReadOnlySpan<TScalar> twiddles, int t)
        {
            var a0r = re[i0];
            var a0i = im[i0];
            Load(re, im, i0 + stride, twiddles, t, out var a1r, out var a1i);
            Load(re, im, i0 + (2 * stride), twiddles, t + 2, out var a2r, out var a2i);
            Load(re, im, i0 + (3 * stride), twiddles, t + 4, out var a3r, out var a3i);
            var t0r = TOps.Add(a0r, a2r);
            var t0i = TOps.Add(a0i, a2i);
            var t1r = TOps.Sub(a0r, a2r);
            var t1i = TOps.Sub(a0i, a2i);
            var t2r = TOps.Add(a1r, a3r);
            var t2i = TOps.Add(a1i, a3i);
            var t3r = TOps.Sub(a1r, a3r);
            var t3i = TOps.Sub(a1i, a3i);

            // X1 = t1 − i·t3, X3 = t1 + i·t3 (forward transform, W = e^(−2πi/4) = −i).
            Store(re, im, i0, TOps.Add(t0r, t2r), TOps.Add(t0i, t2i));
            Store(re, im, i0 + (2 * stride), TOps.Sub(t0r, t2r), TOps.Sub(t0i, t2i));
            Store(re, im, i0 + stride, TOps.Add(t1r, t3i), TOps.Sub(t1i, t3r));
            Store(re, im, i0 + (3 * stride), TOps.Sub(t1r, t3i), TOps.Add(t1i, t3r));
        }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static void Radix3(Span<TVec> re, Span<TVec> im, int i0, int stride, ReadOnlySpan<TScalar> twiddles, int t)
        {
            Load(re, im, i0 + stride, twiddles, t, out var a1r, out var a1i);
            Load(re, im, i0 + (2 * stride), twiddles, t + 2, out var a2r, out var a2i);
            var a0r = re[i0];
            var a0i = im[i0];
            var half = TOps.Splat(TScalar.CreateTruncating(0.5));
            var s = TOps.Splat(TScalar.CreateTruncating(HalfSqrt3));
            var t1r = TOps.Add(a1r, a2r);
            var t1i = TOps.Add(a1i, a2i);
            var t2r = TOps.Sub(a1r, a2r);
            var t2i = TOps.Sub(a1i, a2i);

            // X1,2 = a0 − t1/2 ∓ i·(√3/2)·t2.
            var mr = TOps.NegMulAdd(t1r, half, a0r);
            var mi = TOps.NegMulAdd(t1i, half, a0i);
            var sr = TOps.Mul(s, t2i);
            var si = TOps.Mul(s, t2r);
            Store(re, im, i0, TOps.Add(a0r, t1r), TOps.Add(a0i, t1i));
            Store(re, im, i0 + stride, TOps.Add(mr, sr), TOps.Sub(mi, si));
            Store(re, im, i0 + (2 * stride), TOps.Sub(mr, sr), TOps.Add(mi, si));
        }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static void Radix5(Span<TVec> re, Span<TVec> im, int i0, int stride, ReadOnlySpan<TScalar> twiddles, int t)
        {
            var c1 = TOps.Splat(TScalar.CreateTruncating(Cos2Pi5));
            var c2 = TOps.Splat(TScalar.CreateTruncating(Cos4Pi5));
            var s1 = TOps.Splat(TScalar.CreateTruncating(Sin2Pi5));
            var s2 = TOps.Splat(TScalar.CreateTruncating(Sin4Pi5));
            Load(re, im, i0 + stride, twiddles, t, out var a1r, out var a1i);
            Load(re, im, i0 + (2 * stride), twiddles, t + 2, out var a2r, out var a2i);
            Load(re, im, i0 + (3 * stride), twiddles, t + 4, out var a3r, out var a3i);
            Load(re, im, i0 + (4 * stride), twiddles, t + 6, out var a4r, out var a4i);
            var a0r = re[i0];
            var a0i = im[i0];
            var t1r = TOps.Add(a1r, a4r);
            var t1i = TOps.Add(a1i, a4i);
            var t2r = TOps.Add(a2r, a3r);
            var t2i = TOps.Add(a2i, a3i);
            var t3r = TOps.Sub(a1r, a4r);
            var t3i = TOps.Sub(a1i, a4i);
            var t4r = TOps.Sub(a2r, a3r);
            var t4i = TOps.Sub(a2i, a3i);

            // b1 = a0 + c1·t1 + c2·t2, b2 = a0 + c2·t1 + c1·t2; d1 = s1·t3 + s2·t4, d2 = s2·t3 − s1·t4;
            // X1,4 = b1 ∓ i·d1, X2,3 = b2 ∓ i·d2 (W = e^(−2πi/5) = c1 − i·s1).
            var b1r = TOps.MulAdd(c2, t2r, TOps.MulAdd(c1, t1r, a0r));
            var b1i = TOps.MulAdd(c2, t2i, TOps.MulAdd(c1, t1i, a0i));
            var b2r = TOps.MulAdd(c1, t2r, TOps.MulAdd(c2, t1r, a0r));
            var b2i = TOps.MulAdd(c1, t2i, TOps.MulAdd(c2, t1i, a0i));
            var d1r = TOps.MulAdd(s2, t4r, TOps.Mul(s1, t3r));
            var d1i = TOps.MulAdd(s2, t4i, TOps.Mul(s1, t3i));
            var d2r = TOps.NegMulAdd(s1, t4r, TOps.Mul(s2, t3r));
            var d2i = TOps.NegMulAdd(s1, t4i, TOps.Mul(s2, t3i));
            Store(re, im, i0, TOps.Add(a0r, TOps.Add(t1r, t2r)), TOps.Add(a0i, TOps.Add(t1i, t2i)));
            Store(re, im, i0 + stride, TOps.Add(b1r, d1i), TOps.Sub(b1i, d1r));
            Store(re, im, i0 + (4 * stride), TOps.Sub(b1r, d1i), TOps.Add(b1i, d1r));
            Store(re, im, i0 + (2 * stride), TOps.Add(b2r, d2i), TOps.Sub(b2i, d2r));
            Store(re, im, i0 + (3 * stride), TOps.Sub(b2r, d2i), TOps.Add(b2i, d2r));
        }
    }
}
