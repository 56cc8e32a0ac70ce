using System.Numerics;
using System.Runtime.CompilerServices;

namespace HumWatch.Core.Spectra.Fft;

/// <summary>
/// The steps around the complex FFT for every precision (float64 and float32): the Hann window, density scale and
/// split-step twiddles (made once in float64), and the scaled one-sided power per bin, generic over lane width and precision.
/// </summary>
internal static class PowerSteps
{
    /// <summary>Argument checks shared by the FFT kernels' constructors; the exceptions name the parameter and its range.</summary>
    public static void CheckKernelArguments(int segmentLength, double sampleRateHz)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(segmentLength, 2);
        if (!(sampleRateHz > 0) || !double.IsFinite(sampleRateHz))
        {
            throw new ArgumentOutOfRangeException(nameof(sampleRateHz), sampleRateHz, "Sample rate must be a positive finite number of Hz.");
        }

        if (!ComplexFftPlan.Supports(segmentLength))
        {
            throw new ArgumentOutOfRangeException(nameof(segmentLength), segmentLength, "Segment length must be ≥ 2 with no prime factor other than 2, 3 and 5.");
        }
    }

    /// <summary>Periodic Hann window of <paramref name="segmentLength"/> samples and the density scale 1/(fs·Σw²), both float64.</summary>
    public static double[] Window(int segmentLength, double sampleRateHz, out double densityScale)
    {
        var window = new double[segmentLength];
        HannWindow.FillPeriodic(window);
        double sumSquares = 0;
        for (var i = 0; i < segmentLength; i++)
        {
            sumSquares += window[i] * window[i];
        }

        densityScale = 1.0 / (sampleRateHz * sumSquares);
        return window;
    }

    /// <summary>Split-step twiddles (cos, −sin of 2πk/N) for k = 0 … M/2, M = N/2, even <paramref name="segmentLength"/> only.</summary>
    public static double[] SplitTwiddles(int segmentLength)
    {
        if ((segmentLength & 1) != 0)
        {
            return [];
        }

        var m = segmentLength / 2;
        var twiddles = new double[2 * ((m / 2) + 1)];
        for (var k = 0; k <= m / 2; k++)
        {
            var angle = 2 * Math.PI * k / segmentLength;
            twiddles[2 * k] = Math.Cos(angle);
            twiddles[(2 * k) + 1] = -Math.Sin(angle);
        }

        return twiddles;
    }

    /// <summary>The values of <paramref name="values"/> in <typeparamref name="TScalar"/> (rounded once for float32).</summary>
    public static TScalar[] Round<TScalar>(ReadOnlySpan<double> values)
        where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
    {
        var result = new TScalar[values.Length];
        for (var i = 0; i < values.Length; i++)
        {
            result[i] = TScalar.CreateTruncating(values[i]);
        }

        return result;
    }

    /// <summary>
    /// Even N = 2M: from Z = FFT of z[n] = x[2n] + i·x[2n+1] (natural order) to the scaled power in place — bin k
    /// (0 ≤ k &lt; M) at re[k], the Nyquist bin M at im[0].
    /// </summary>
    public static void Split<TOps, TVec, TScalar>(Span<TVec> re, Span<TVec> im, int m, ReadOnlySpan<TScalar> twiddles, TScalar densityScale)
        where TOps : struct, ILaneOps<TVec, TScalar>
        where TVec : struct
        where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
    {
        // X[0] = Re Z0 + Im Z0 and X[M] = Re Z0 − Im Z0 are real; neither is doubled (DC and Nyquist).
        var scale = TOps.Splat(densityScale);
        var dc = TOps.Add(re[0], im[0]);
        var nyquist = TOps.Sub(re[0], im[0]);
        re[0] = TOps.Mul(TOps.Mul(dc, dc), scale);
        im[0] = TOps.Mul(TOps.Mul(nyquist, nyquist), scale);

        // With A = Z[k], B = Z[M−k]: 2E = A + conj(B), 2O = −i·(A − conj(B)), X[k] = E + W^k·O and
        // X[M−k] = conj(E − W^k·O), W = e^(−2πi/N). The halves of E and O go into the scale: 2·(1/2)² = 1/2.
        var doubled = TOps.Splat(densityScale / (TScalar.One + TScalar.One));
        for (var k = 1; k <= m / 2; k++)
        {
            var mk = m - k;
            var ar = re[k];
            var ai = im[k];
            var br = re[mk];
            var bi = im[mk];
            var er = TOps.Add(ar, br);
            var ei = TOps.Sub(ai, bi);
            var wor = TOps.Add(ai, bi);
            var woi = TOps.Sub(br, ar);
            LanePacks.MultiplyByTwiddle<TOps, TVec, TScalar>(ref wor, ref woi, twiddles[2 * k], twiddles[(2 * k) + 1]);
            var xr = TOps.Add(er, wor);
            var xi = TOps.Add(ei, woi);
            var yr = TOps.Sub(er, wor);
            var yi = TOps.Sub(ei, woi);
            re[k] = TOps.Mul(TOps.MulAdd(xr, xr, TOps.Mul(xi, xi)), doubled);
            re[mk] = TOps.Mul(TOps.MulAdd(yr, yr, TOps.Mul(yi, yi)), doubled);
        }
    }

    /// <summary>Odd N: from X = FFT of the real input to the scaled power in place, bin k (0 ≤ k &lt; <paramref name="binCount"/>) at re[k].</summary>
    public static void Odd<TOps, TVec, TScalar>(Span<TVec> re, Span<TVec> im, int binCount, TScalar densityScale)
        where TOps : struct, ILaneOps<TVec, TScalar>
        where TVec : struct
        where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
    {
        var scale = TOps.Splat(densityScale);
        var doubled = TOps.Splat(densityScale + densityScale);
        re[0] = TOps.Mul(TOps.MulAdd(re[0], re[0], TOps.Mul(im[0], im[0])), scale);
        for (var k = 1; k < binCount; k++)
        {
            re[k] = TOps.Mul(TOps.MulAdd(re[k], re[k], TOps.Mul(im[k], im[k])), doubled);
        }
    }
}
