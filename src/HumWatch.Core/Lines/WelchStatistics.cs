namespace HumWatch.Core.Lines;

/// <summary>Sampling statistics of Welch PSD bins, used to set and justify thresholds.</summary>
internal static class WelchStatistics
{
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

    // Periodic (DFT-even) Hann, as scipy.signal.get_window('hann', N) and the periodogram kernel use.
    private static double Hann(int j, int length) => 0.5 - (0.5 * Math.Cos(2 * Math.PI * j / length));
}
