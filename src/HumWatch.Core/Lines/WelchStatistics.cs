namespace HumWatch.Core.Lines;

/// <summary>Sampling statistics of Welch PSD bins, used to set and justify thresholds.</summary>
internal static class WelchStatistics
{
    /// <summary>
    /// <see cref="BinPowerCorrelation"/> of one periodic Hann segment at lags 1 and 2: the DFT of w² is N·(3/8, −1/4, 1/16)
    /// at bins 0, ±1, ±2, so the correlations are (2/3)² and (1/6)² exactly. Welch averages at 50 % overlap are close (0.454, 0.036).
    /// </summary>
    public static readonly double[] SingleSegmentHannBinCorrelations = [4.0 / 9, 1.0 / 36];

    /// <summary>
    /// Equivalent degrees of freedom ν of a K-segment Welch average with a periodic Hann window: a bin is ≈ S·χ²_ν/ν.
    /// Welch 1967's variance of the average: Var/S² = (1/K)·[1 + 2·Σ_{s=1}^{K−1} (1 − s/K)·ρ(s)], with
    /// ρ(s) = [Σ w(j)·w(j + s·D)]² / [Σ w(j)²]², and ν = 2 / (Var/S²). Hann at 50 % overlap: ρ(1) = 1/36, ν ≈ 1.9·K.
    /// </summary>
    public static double EquivalentDegreesOfFreedom(int segmentLength, int stepSamples, int segments)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(segmentLength, 2);
        ArgumentOutOfRangeException.ThrowIfLessThan(stepSamples, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(segments, 1);
        var energy = 0.0;
        for (var j = 0; j < segmentLength; j++)
        {
            var w = Hann(j, segmentLength);
            energy += w * w;
        }

        var sum = 0.0;
        for (var s = 1; s < segments; s++)
        {
            var lag = (long)s * stepSamples;
            if (lag >= segmentLength)
            {
                break;
            }

            var overlap = 0.0;
            for (var j = 0; j + lag < segmentLength; j++)
            {
                overlap += Hann(j, segmentLength) * Hann((int)(j + lag), segmentLength);
            }

            var rho = overlap * overlap / (energy * energy);
            sum += (1 - ((double)s / segments)) * rho;
        }

        var relativeVariance = (1 + (2 * sum)) / segments;
        return 2 / relativeVariance;
    }

    /// <summary>
    /// Correlation between the Welch PSD bins k and k + <paramref name="lagBins"/> of white Gaussian noise (away from DC
    /// and Nyquist), for a K-segment average with a periodic Hann window. With γ_L(d) = Σ_j w(j)·w(j + L)·e^{i2πdj/N} / Σ w²
    /// the correlation of two segments' DFT values L samples apart at bins d apart, the covariance of the mean of
    /// |X|² is ∝ Σ_{s,s'} |γ_{|s−s'|·D}(d)|² (Isserlis' theorem for complex Gaussian values), so the correlation is that
    /// sum at d over the same sum at 0 — the quantity Welch 1967 uses at d = 0 for the variance. One segment:
    /// |γ₀(1)|² = 4/9, |γ₀(2)|² = 1/36, 0 beyond (the DFT of w² has only five non-zero terms).
    /// </summary>
    public static double BinPowerCorrelation(int segmentLength, int stepSamples, int segments, int lagBins)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(segmentLength, 2);
        ArgumentOutOfRangeException.ThrowIfLessThan(stepSamples, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(segments, 1);
        ArgumentOutOfRangeException.ThrowIfNegative(lagBins);
        var atLag = 0.0;
        var atZero = 0.0;
        for (var s = 0; s < segments; s++)
        {
            var lag = (long)s * stepSamples;
            if (lag >= segmentLength)
            {
                break;
            }

            // Ordered segment pairs s apart: K for s = 0, 2·(K − s) otherwise.
            var pairs = s == 0 ? segments : 2 * (segments - s);
            atLag += pairs * SquaredWindowOverlap(segmentLength, (int)lag, lagBins);
            atZero += pairs * SquaredWindowOverlap(segmentLength, (int)lag, 0);
        }

        return atLag / atZero;
    }

    /// <summary>
    /// Median of χ²_ν/ν (Wilson–Hilferty: (1 − 2/(9ν))³; within 1.5 % of the exact value for ν ≥ 2, e.g. ν = 2: 0.702
    /// vs ln 2 = 0.693 — scipy.stats.chi2). Dividing a median-of-bins floor by it makes the floor an estimate of the mean.
    /// </summary>
    public static double MedianOfScaledChiSquare(double degreesOfFreedom)
    {
        if (degreesOfFreedom <= 2.0001)
        {
            // Exact for one periodogram (exponential distribution).
            return Math.Log(2);
        }

        var a = 1 - (2 / (9 * degreesOfFreedom));
        return a * a * a;
    }

    // |Σ_j w(j)·w(j + lag)·e^{i2πdj/N}|², unnormalised.
    private static double SquaredWindowOverlap(int length, int lag, int lagBins)
    {
        double re = 0, im = 0;
        for (var j = 0; j + lag < length; j++)
        {
            var product = Hann(j, length) * Hann(j + lag, length);
            var angle = 2 * Math.PI * ((long)lagBins * j % length) / length;
            re += product * Math.Cos(angle);
            im += product * Math.Sin(angle);
        }

        return (re * re) + (im * im);
    }

    // Periodic (DFT-even) Hann, as scipy.signal.get_window('hann', N) and the periodogram kernel use.
    private static double Hann(int j, int length) => 0.5 - (0.5 * Math.Cos(2 * Math.PI * j / length));
}
