using MathNet.Numerics;
using MathNet.Numerics.Distributions;

namespace HumWatch.Core.Lines;

/// <summary>
/// False-alarm probabilities of line peaks: how likely Gaussian noise alone would stand as far above the finder's floor.
/// Fixed-size tables built once; <see cref="BinProbability"/> allocates nothing. Immutable, so thread-safe.
/// </summary>
/// <remarks>
/// <para><b>Peak bin.</b> A Welch bin of noise with density S is ≈ S·χ²_ν/ν, ν the equivalent degrees of freedom
/// (Welch 1967; <see cref="WelchStatistics.EquivalentDegreesOfFreedom"/>).</para>
/// <para><b>Floor.</b> The finder's floor is the median of n flanking bins times c = 1/m̃ (m̃ the Wilson–Hilferty median of
/// χ²_ν/ν). It is itself an estimate: for the default 16 flank bins its relative standard deviation is ≈ 0.24, and
/// treating it as the true S (P = P(χ²_ν/ν ≥ ratio)) makes small probabilities several times too small (seeded
/// simulation: 0.004–0.005 of noise bins at P ≤ 0.001). So the floor is modelled as S·b·χ²_{ν_F}/ν_F, matching its mean and variance (Satterthwaite
/// 1946, Biometrics Bull. 2:110–114): b·m̃ is the mean of the sample median from the order-statistic expansion
/// E X₍ᵣ₎ ≈ Q(p) + p(1 − p)·Q''(p)/(2(n + 2)), p = r/(n + 1) (David &amp; Johnson 1954, Biometrika 41:228–240; H. A. David &amp;
/// H. N. Nagaraja, Order Statistics, 3rd ed. 2003, §4.6 — form from memory), averaged over the two middle order
/// statistics for even n; its variance is the large-sample variance of a median, 1/(4n·f(m)²) (H. Cramér, Mathematical
/// Methods of Statistics, 1946, §28.5), times the factor for dependent samples 1 + (4/(πn))·Σ_pairs arcsin ρ_d
/// (P. K. Sen 1968, Ann. Math. Statist. 39:1724–1730, with the median-split covariance arcsin(ρ)/(2π) of a bivariate
/// normal pair, W. F. Sheppard 1899, Phil. Trans. R. Soc. A 192 — applied to the bins' power as if it were Gaussian,
/// an approximation the seeded simulation in the tests checks), ρ_d the correlation of bins d apart (<see cref="WelchStatistics.BinPowerCorrelation"/>:
/// 0.45 at one bin, 0.04 at two for Hann at 50 % overlap) and the pairs counted within each flank's run of contiguous bins.
/// Then ν_F = 2b²/Var.</para>
/// <para><b>Ratio.</b> The peak bin is ≥ 4 bins from its flanks (uncorrelated), so (ratio·b) follows Snedecor's
/// F(ν, ν_F), and the per-bin probability is its survival function, I_{ν_F/(ν_F + ν·x)}(ν_F/2, ν/2) (regularised incomplete
/// beta; Abramowitz &amp; Stegun 26.6.2). The ratio passed in is the peak over the floor the finder used, which is the median
/// floor or higher (the near level can raise it), so the probability is the model's or larger: conservative. Short
/// flanks (n &lt; 12, near DC and Nyquist) and ν = 2 come out conservative too (the normal approximation of a small
/// sample's median overstates its spread).</para>
/// <para><b>Line.</b> A line is reported when any of the searched bins of any analysed channel passes, so its
/// probability is the smallest per-bin probability among its channels, corrected for the M = bins × channels searched by
/// Šidák's formula 1 − (1 − p)^M (Z. Šidák 1967, J. Amer. Statist. Assoc. 62:626–633) — the chance that noise alone puts a
/// peak this strong anywhere in the frame. It takes neither the other channels' evidence nor the narrowness and
/// segment tests into account, which can only make it larger than the truth.</para>
/// </remarks>
internal sealed class LineSignificance
{
    private const int MaxCorrelatedLag = 4;

    private readonly double _degreesOfFreedom;
    private readonly int _maxFlankBinsPerSide;
    private readonly double[] _scale;
    private readonly double[] _varianceIndependent;
    private readonly double[] _pairWeight;

    /// <param name="degreesOfFreedom">ν of a PSD bin, ≥ 2.</param>
    /// <param name="binCorrelations">Correlation of bins 1, 2, … apart (<see cref="WelchStatistics.BinPowerCorrelation"/>); lags past the span count as 0.</param>
    /// <param name="floorCorrection">The factor the finder multiplies the flank median by.</param>
    /// <param name="maxFlankBinsPerSide">Largest run of flank bins on one side.</param>
    public LineSignificance(double degreesOfFreedom, ReadOnlySpan<double> binCorrelations, double floorCorrection, int maxFlankBinsPerSide)
    {
        if (!(degreesOfFreedom >= 2) || !double.IsFinite(degreesOfFreedom))
        {
            throw new ArgumentOutOfRangeException(nameof(degreesOfFreedom), degreesOfFreedom, "Degrees of freedom must be a finite number ≥ 2.");
        }

        if (!(floorCorrection > 0))
        {
            throw new ArgumentOutOfRangeException(nameof(floorCorrection), floorCorrection, "Floor correction must be positive.");
        }

        ArgumentOutOfRangeException.ThrowIfLessThan(maxFlankBinsPerSide, 1);
        _degreesOfFreedom = degreesOfFreedom;
        _maxFlankBinsPerSide = maxFlankBinsPerSide;

        // Covariance weight of one pair d bins apart, arcsin(ρ_d)/π counted once per unordered pair (Sen 1968 × Sheppard).
        _pairWeight = new double[MaxCorrelatedLag + 1];
        for (var d = 1; d <= MaxCorrelatedLag && d <= binCorrelations.Length; d++)
        {
            _pairWeight[d] = Math.Asin(Math.Clamp(binCorrelations[d - 1], -1, 1)) / Math.PI;
        }

        // Per flank count n: the floor's mean over S (b, with the finder's correction) and its variance over S² for
        // independent bins. Quantiles of χ²_ν/ν are Q(p) = InvCDF(ν, p)/ν; its density f(x) = ν·pdf(ν, νx).
        var maxCount = 2 * maxFlankBinsPerSide;
        _scale = new double[maxCount + 1];
        _varianceIndependent = new double[maxCount + 1];
        var median = ScaledQuantile(0.5);
        var densityAtMedian = ScaledDensity(median);
        for (var n = 1; n <= maxCount; n++)
        {
            var mean = (n & 1) == 1
                ? ExpectedOrderStatistic(0.5, n)
                : 0.5 * (ExpectedOrderStatistic((n / 2) / (n + 1.0), n) + ExpectedOrderStatistic(((n / 2) + 1) / (n + 1.0), n));
            _scale[n] = mean * floorCorrection;
            _varianceIndependent[n] = floorCorrection * floorCorrection / (4.0 * n * densityAtMedian * densityAtMedian);
        }
    }

    /// <summary>ν of the peak bin.</summary>
    public double DegreesOfFreedom => _degreesOfFreedom;

    /// <summary>
    /// Probability that a noise-only bin stands at least <paramref name="ratio"/> times over a floor estimated from
    /// <paramref name="lowFlankBins"/> + <paramref name="highFlankBins"/> flank bins (two contiguous runs), 0..1.
    /// </summary>
    public double BinProbability(double ratio, int lowFlankBins, int highFlankBins)
    {
        if (double.IsNaN(ratio))
        {
            return double.NaN;
        }

        var low = Math.Clamp(lowFlankBins, 0, _maxFlankBinsPerSide);
        var high = Math.Clamp(highFlankBins, 0, _maxFlankBinsPerSide);
        var n = low + high;
        if (n == 0)
        {
            return double.NaN;
        }

        var dependentPairs = 0.0;
        for (var d = 1; d < _pairWeight.Length; d++)
        {
            dependentPairs += (Math.Max(0, low - d) + Math.Max(0, high - d)) * _pairWeight[d];
        }

        var scale = _scale[n];
        var variance = _varianceIndependent[n] * (1 + (4 * dependentPairs / n));
        var floorDegrees = 2 * scale * scale / variance;
        return FisherSurvival(ratio * scale, _degreesOfFreedom, floorDegrees);
    }

    /// <summary>
    /// P(F ≥ x) for Snedecor's F(d1, d2): I_{d2/(d2 + d1·x)}(d2/2, d1/2) (Abramowitz &amp; Stegun 26.6.2). d2 = ∞ is a floor
    /// known exactly: P(χ²_{d1}/d1 ≥ x) = Q(d1/2, d1·x/2), the regularised upper incomplete gamma function (A&amp;S 26.4.19).
    /// </summary>
    public static double FisherSurvival(double x, double d1, double d2)
    {
        if (double.IsNaN(x))
        {
            return double.NaN;
        }

        if (!(x > 0))
        {
            return 1;
        }

        if (double.IsPositiveInfinity(x))
        {
            return 0;
        }

        return double.IsPositiveInfinity(d2)
            ? SpecialFunctions.GammaUpperRegularized(d1 / 2, d1 * x / 2)
            : SpecialFunctions.BetaRegularized(d2 / 2, d1 / 2, d2 / (d2 + (d1 * x)));
    }

    /// <summary>Šidák's family-wise probability 1 − (1 − p)^tests, computed without cancellation for small p.</summary>
    public static double Sidak(double probability, double tests)
    {
        if (double.IsNaN(probability))
        {
            return double.NaN;
        }

        var p = Math.Clamp(probability, 0, 1);
        return p >= 1 ? 1 : -ExpMinusOne(tests * LogOnePlus(-p));
    }

    // ln(1 + x) to a few ulps for small x: ln(u)·x/(u − 1) with u = 1 + x rounded (D. Goldberg, "What every computer
    // scientist should know about floating-point arithmetic", ACM Comput. Surv. 23(1), 1991, Theorem 4).
    private static double LogOnePlus(double x)
    {
        var u = 1 + x;
        return u == 1 ? x : Math.Log(u) * x / (u - 1);
    }

    // e^y − 1 to a few ulps for small y: (u − 1)·y/ln u with u = e^y rounded (W. Kahan's method, as in N. J. Higham,
    // Accuracy and Stability of Numerical Algorithms, 2nd ed. 2002, §1.14.1 — section from memory).
    private static double ExpMinusOne(double y)
    {
        var u = Math.Exp(y);
        if (u == 1)
        {
            return y;
        }

        var um1 = u - 1;
        return um1 == -1 ? -1 : um1 * y / Math.Log(u);
    }

    private double ScaledQuantile(double p) => ChiSquared.InvCDF(_degreesOfFreedom, p) / _degreesOfFreedom;

    private double ScaledDensity(double x) => _degreesOfFreedom * ChiSquared.PDF(_degreesOfFreedom, _degreesOfFreedom * x);

    // E X₍ᵣ₎ ≈ Q(p) + p(1 − p)·Q''(p)/(2(n + 2)), with Q'' = −f'(Q)/f(Q)³ and, for the gamma density of χ²_ν/ν,
    // f'(x)/f(x) = (ν/2 − 1)/x − ν/2.
    private double ExpectedOrderStatistic(double p, int n)
    {
        var q = ScaledQuantile(p);
        var f = ScaledDensity(q);
        var logSlope = ((0.5 * _degreesOfFreedom) - 1) / q - (0.5 * _degreesOfFreedom);
        var secondDerivative = -logSlope / (f * f);
        return q + (p * (1 - p) * secondDerivative / (2.0 * (n + 2)));
    }
}
