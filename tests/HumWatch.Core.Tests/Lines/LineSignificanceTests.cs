using System.Text.Json;
using HumWatch.Core.Lines;
using HumWatch.Core.Spectra;
using MathNet.Numerics;
using MathNet.Numerics.Distributions;
using Xunit;

namespace HumWatch.Core.Tests.Lines;

public sealed class LineSignificanceTests
{
    private const double Fs = 500;
    private const int Segment = 2000; // 4 s segments, 0.25 Hz bins, 50 % overlap: the default frame
    private const int Step = 1000;
    private const int Segments = 3;
    private const int FlankBins = 8; // default 2 Hz half-width at 0.25 Hz bins

    private static JsonElement Fixture(string table)
    {
        var json = JsonDocument.Parse(File.ReadAllText(Path.Combine(AppContext.BaseDirectory, "fixtures", "lines", "significance.json")));
        Assert.Equal("1.10.1", json.RootElement.GetProperty("scipy").GetString());
        return json.RootElement.GetProperty(table);
    }

    [Fact]
    public void Snedecor_F_survival_matches_scipy_f_sf_over_thirty_decades()
    {
        var rows = 0;
        foreach (var row in Fixture("f_sf").EnumerateArray())
        {
            var d1 = row.GetProperty("d1").GetDouble();
            var d2 = row.GetProperty("d2").GetDouble();
            var x = row.GetProperty("x").GetDouble();
            var expected = row.GetProperty("sf").GetDouble(); // scipy 1.10.1 stats.f.sf(x, d1, d2)

            var actual = LineSignificance.FisherSurvival(x, d1, d2);

            AssertRelative(expected, actual, 1e-9, $"F({d1}, {d2}) at {x}");
            rows++;
        }

        Assert.Equal(5 * 5 * 9, rows);
    }

    [Fact]
    public void F_survival_with_a_known_floor_is_the_chi_square_survival_of_scipy()
    {
        // ν₂ = ∞ is a floor known exactly: P(F ≥ x) = P(χ²_ν/ν ≥ x), the test a Welch bin gets against its true density.
        var rows = 0;
        foreach (var row in Fixture("chi2_sf").EnumerateArray())
        {
            var nu = row.GetProperty("nu").GetDouble();
            var x = row.GetProperty("x").GetDouble();
            var expected = row.GetProperty("sf").GetDouble(); // scipy 1.10.1 stats.chi2.sf(nu·x, nu)

            AssertRelative(expected, LineSignificance.FisherSurvival(x, nu, double.PositiveInfinity), 1e-9, $"χ²_{nu}/{nu} at {x}");
            rows++;
        }

        Assert.Equal(5 * 9, rows);
    }

    [Fact]
    public void Chi_square_quantiles_and_densities_behind_the_floor_model_match_scipy()
    {
        foreach (var row in Fixture("chi2_ppf").EnumerateArray())
        {
            var nu = row.GetProperty("nu").GetDouble();
            var p = row.GetProperty("p").GetDouble();

            // scipy 1.10.1 stats.chi2.ppf(p, nu)
            AssertRelative(row.GetProperty("ppf").GetDouble(), ChiSquared.InvCDF(nu, p), 1e-7, $"ppf({p}, {nu})");
        }

        foreach (var row in Fixture("chi2_pdf").EnumerateArray())
        {
            var nu = row.GetProperty("nu").GetDouble();
            var x = row.GetProperty("x").GetDouble();

            // scipy 1.10.1 stats.chi2.pdf(x, nu)
            AssertRelative(row.GetProperty("pdf").GetDouble(), ChiSquared.PDF(nu, x), 1e-10, $"pdf({x}, {nu})");
        }
    }

    [Fact]
    public void Sidak_correction_is_exact_for_one_test_and_keeps_tiny_probabilities()
    {
        Assert.Equal(0.3, LineSignificance.Sidak(0.3, 1), 15);
        Assert.Equal(1 - (0.9 * 0.9 * 0.9), LineSignificance.Sidak(0.1, 3), 15); // 1 − (1 − p)^m (Šidák 1967)
        Assert.Equal(1e-17, LineSignificance.Sidak(1e-20, 1000), 1e-29); // ≈ m·p for small p, not 1 − 1 = 0
        Assert.Equal(1.0, LineSignificance.Sidak(1.0, 1000));
        Assert.True(double.IsNaN(LineSignificance.Sidak(double.NaN, 10)));
    }

    [Fact]
    public void Probability_falls_with_the_ratio_and_rises_with_a_shorter_flank()
    {
        var significance = DefaultSignificance();
        var previous = 1.0;
        foreach (var ratio in new[] { 0.5, 1, 2, 5, 10, 20, 100, 1e4 })
        {
            var p = significance.BinProbability(ratio, FlankBins, FlankBins);
            Assert.InRange(p, 0, previous);
            previous = p;
        }

        // A floor from fewer bins is less certain: the same ratio is more likely from noise.
        Assert.True(significance.BinProbability(10, 3, 3) > significance.BinProbability(10, FlankBins, FlankBins));
        Assert.True(significance.BinProbability(10, FlankBins, 0) > significance.BinProbability(10, FlankBins, FlankBins));
        Assert.True(double.IsNaN(significance.BinProbability(double.NaN, FlankBins, FlankBins)));
    }

    [Theory]
    [InlineData(0.0)] // white
    [InlineData(0.9)] // AR(1), coloured: 19 dB more power at DC than at Nyquist
    public void Noise_only_bins_reach_p_at_most_alpha_at_rate_alpha(double arCoefficient)
    {
        // Seeded Gaussian noise through the default frame (K = 3 segments of 4 s, 50 % overlap). Bins 23 apart so that
        // no two share a flank bin and their peaks are uncorrelated (Hann bins > 2 apart: correlation < 0.001), so the
        // count of p ≤ α is binomial(n, α). Bound: 4 binomial standard deviations either side.
        var random = new Random(arCoefficient == 0 ? 1967 : 1946);
        var significance = DefaultSignificance();
        var correction = 1 / WelchStatistics.MedianOfScaledChiSquare(significance.DegreesOfFreedom);
        var nu = significance.DegreesOfFreedom;
        var alphas = new[] { 0.001, 0.01, 0.05 };
        var hits = new int[alphas.Length];
        var naiveHits = new int[alphas.Length];
        var scratch = new double[2 * FlankBins];
        var psd = new double[(Segment / 2) + 1];
        var x = new double[Segment + ((Segments - 1) * Step)];
        var n = 0;
        for (var spectrum = 0; spectrum < 1500; spectrum++)
        {
            Noise(random, x, arCoefficient);
            WelchPsd.Compute(x, Fs, Segment, Segment - Step, psd);
            for (var k = 40; k <= 960; k += 23)
            {
                var median = LocalFloor.Median(psd, k, LineFinder.GuardBins, FlankBins, 2, 6, scratch);
                var ratio = psd[k] / (median * correction);
                var p = significance.BinProbability(ratio, FlankBins, FlankBins);

                // The floor taken as the true S: P(χ²_ν/ν ≥ ratio) (Welch 1967 with equivalent dof).
                var naive = SpecialFunctions.GammaUpperRegularized(nu / 2, nu * ratio / 2);
                for (var a = 0; a < alphas.Length; a++)
                {
                    hits[a] += p <= alphas[a] ? 1 : 0;
                    naiveHits[a] += naive <= alphas[a] ? 1 : 0;
                }

                n++;
            }
        }

        for (var a = 0; a < alphas.Length; a++)
        {
            var alpha = alphas[a];
            var bound = 4 * Math.Sqrt(alpha * (1 - alpha) / n);
            var rate = (double)hits[a] / n;
            Assert.True(Math.Abs(rate - alpha) <= bound, $"α = {alpha}: observed {rate:F5} over {n} bins, allowed {alpha} ± {bound:F5}");
        }

        // Treating the estimated floor as exact is several times too optimistic at small α: the model is needed.
        var naiveRate = (double)naiveHits[0] / n;
        Assert.True(naiveRate > 3 * alphas[0], $"naive χ² rate {naiveRate:F5} at α = {alphas[0]}");
    }

    [Fact]
    public void Line_probabilities_of_the_finder_on_noise_alone_keep_the_family_wise_rate_below_alpha()
    {
        // The finder at its lowest threshold (3 dB) reports many noise peaks; a spectrum has a false line at level α
        // when its most significant peak, Šidák-corrected for the bins searched, has probability ≤ α. Valid means that
        // happens in at most a share α of noise-only spectra (one-sided: the narrowness and near-level tests and the
        // correlation between neighbouring bins only make it rarer). Bound: α + 3 binomial standard deviations.
        var random = new Random(1983);
        var nu = WelchStatistics.EquivalentDegreesOfFreedom(Segment, Step, Segments);
        var options = new LineFinderOptions { MinProminenceDb = 3, MinAmplitudeUvRms = 0, MaxPeaksPerChannel = 256 };
        var finder = new LineFinder(options, (Segment / 2) + 1, Fs / Segment, nu, Correlations());
        var peaks = new ChannelPeak[finder.Capacity];
        var psd = new double[(Segment / 2) + 1];
        var x = new double[Segment + ((Segments - 1) * Step)];
        var alphas = new[] { 0.05, 0.2 };
        var lineHits = new int[alphas.Length];
        var binHits = new int[alphas.Length];
        const int spectra = 2000;
        var peaksSeen = 0;
        for (var s = 0; s < spectra; s++)
        {
            Noise(random, x, s % 2 == 0 ? 0 : 0.9);
            WelchPsd.Compute(x, Fs, Segment, Segment - Step, psd);
            var count = finder.Find(psd, peaks);
            peaksSeen += count;
            var best = 1.0;
            for (var i = 0; i < count; i++)
            {
                best = Math.Min(best, peaks[i].BinFalseAlarmProbability);
            }

            var line = LineSignificance.Sidak(best, finder.SearchedBinCount);
            for (var a = 0; a < alphas.Length; a++)
            {
                lineHits[a] += line <= alphas[a] ? 1 : 0;
                binHits[a] += best <= alphas[a] ? 1 : 0;
            }
        }

        Assert.True(peaksSeen > 10 * spectra, $"only {peaksSeen} noise peaks: the test would not exercise the probabilities");
        for (var a = 0; a < alphas.Length; a++)
        {
            var alpha = alphas[a];
            var rate = (double)lineHits[a] / spectra;
            Assert.True(rate <= alpha + (3 * Math.Sqrt(alpha * (1 - alpha) / spectra)), $"α = {alpha}: {rate:F4} of noise-only spectra have a line that probable");

            // Without the correction for the bins searched almost every noise spectrum would have a "significant" peak.
            Assert.True((double)binHits[a] / spectra > 0.9, $"uncorrected: {binHits[a]} of {spectra}");
        }
    }

    internal static double[] Correlations() =>
    [
        WelchStatistics.BinPowerCorrelation(Segment, Step, Segments, 1),
        WelchStatistics.BinPowerCorrelation(Segment, Step, Segments, 2),
        WelchStatistics.BinPowerCorrelation(Segment, Step, Segments, 3),
    ];

    private static LineSignificance DefaultSignificance()
    {
        var nu = WelchStatistics.EquivalentDegreesOfFreedom(Segment, Step, Segments);
        return new LineSignificance(nu, Correlations(), 1 / WelchStatistics.MedianOfScaledChiSquare(nu), FlankBins);
    }

    // Unit-variance Gaussian noise (Box–Muller), optionally through x[n] = a·x[n−1] + e[n] after a burn-in.
    private static void Noise(Random random, double[] x, double a)
    {
        var previous = 0.0;
        for (var n = -200; n < x.Length; n++)
        {
            var gaussian = Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
            previous = (a * previous) + gaussian;
            if (n >= 0)
            {
                x[n] = previous;
            }
        }
    }

    private static void AssertRelative(double expected, double actual, double tolerance, string what)
    {
        if (expected < 1e-280)
        {
            Assert.True(actual < 1e-280, $"{what}: {actual:E6}, scipy {expected:E6}");
            return;
        }

        Assert.True(Math.Abs(actual - expected) <= tolerance * expected, $"{what}: {actual:E15}, scipy {expected:E15}");
    }
}
