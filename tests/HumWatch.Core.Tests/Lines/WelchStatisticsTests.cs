using System.Text.Json;
using HumWatch.Core.Lines;
using Xunit;

namespace HumWatch.Core.Tests.Lines;

public sealed class WelchStatisticsTests
{
    [Fact]
    public void Median_of_scaled_chi_square_matches_scipy_within_one_and_a_half_percent()
    {
        using var json = JsonDocument.Parse(File.ReadAllText(Path.Combine(AppContext.BaseDirectory, "fixtures", "lines", "chi2_median.json")));
        foreach (var row in json.RootElement.GetProperty("rows").EnumerateArray())
        {
            var nu = row.GetProperty("nu").GetDouble();
            var expected = row.GetProperty("median_over_nu").GetDouble(); // scipy 1.10.1 stats.chi2.median(nu)/nu

            Assert.InRange(WelchStatistics.MedianOfScaledChiSquare(nu) / expected, 0.985, 1.015);
        }
    }

    [Fact]
    public void Hann_half_overlap_gives_about_1_9_degrees_of_freedom_per_segment()
    {
        // Welch 1967 variance with Hann ρ = 1/36 at 50 % overlap (computed): ν ≈ 1.9·K for large K.
        var nu = WelchStatistics.EquivalentDegreesOfFreedom(2000, 1000, 200);

        Assert.InRange(nu / 200, 1.88, 1.92);
        Assert.Equal(2.0, WelchStatistics.EquivalentDegreesOfFreedom(2000, 1000, 1), 9); // one periodogram: χ²₂
    }

    [Fact]
    public void Welch_bins_of_white_noise_scatter_as_the_degrees_of_freedom_predict()
    {
        // Var(χ²_ν/ν) = 2/ν (chi-square variance, handbook). Three 4 s segments at 50 % overlap.
        var random = new Random(99);
        var nu = WelchStatistics.EquivalentDegreesOfFreedom(2000, 1000, 3);
        var values = new List<double>();
        for (var trial = 0; trial < 40; trial++)
        {
            var x = LineFinderTests.Tone(4000, 50, 0, 0, 1, random);
            var psd = SpectrumBuilder.Welch(x, 500, 2000);
            for (var k = 20; k < 980; k += 7)
            {
                values.Add(psd[k] / (2.0 / 500)); // white-noise density 2σ²/fs (scipy density scaling)
            }
        }

        var mean = values.Average();
        var variance = values.Average(v => (v - mean) * (v - mean));
        Assert.InRange(mean, 0.97, 1.03);
        Assert.InRange(variance / (2 / nu), 0.85, 1.15);
    }

    [Fact]
    public void One_Hann_segment_correlates_neighbouring_bins_by_four_ninths_and_one_thirty_sixth()
    {
        // Periodic Hann: w² = 3/8 − ½·cos(2πj/N) + ⅛·cos(4πj/N), so the DFT of w² is N·(3/8, −1/4, 1/16) at 0, ±1, ±2 and
        // the complex correlation of bins d apart is (−2/3, 1/6, 0 …) (Isserlis: power correlation = its square).
        Assert.Equal(4.0 / 9, WelchStatistics.BinPowerCorrelation(2000, 1000, 1, 1), 12);
        Assert.Equal(1.0 / 36, WelchStatistics.BinPowerCorrelation(2000, 1000, 1, 2), 12);
        Assert.Equal(0.0, WelchStatistics.BinPowerCorrelation(2000, 1000, 1, 3), 12);
        Assert.Equal(WelchStatistics.SingleSegmentHannBinCorrelations, [WelchStatistics.BinPowerCorrelation(256, 128, 1, 1), WelchStatistics.BinPowerCorrelation(256, 128, 1, 2)], new ToleranceComparer(1e-12));
    }

    [Fact]
    public void Neighbouring_Welch_bins_of_white_noise_correlate_as_computed()
    {
        // Sample correlation of bins 1 and 2 apart over seeded white-noise spectra (K = 3, 50 % overlap); 40 spectra ×
        // 120 pairs give a standard error of ≈ 0.015 per lag, allowed ± 0.05.
        var random = new Random(36);
        var pairs = new List<(double A, double B1, double B2)>();
        for (var trial = 0; trial < 40; trial++)
        {
            var psd = SpectrumBuilder.Welch(LineFinderTests.Tone(4000, 50, 0, 0, 1, random), 500, 2000);
            for (var k = 20; k < 980; k += 8)
            {
                pairs.Add((psd[k], psd[k + 1], psd[k + 2]));
            }
        }

        Assert.InRange(Correlation(pairs.Select(p => (p.A, p.B1))) - WelchStatistics.BinPowerCorrelation(2000, 1000, 3, 1), -0.05, 0.05);
        Assert.InRange(Correlation(pairs.Select(p => (p.A, p.B2))) - WelchStatistics.BinPowerCorrelation(2000, 1000, 3, 2), -0.05, 0.05);
    }

    private static double Correlation(IEnumerable<(double X, double Y)> values)
    {
        var list = values.ToList();
        var mx = list.Average(v => v.X);
        var my = list.Average(v => v.Y);
        var sxy = list.Sum(v => (v.X - mx) * (v.Y - my));
        var sxx = list.Sum(v => (v.X - mx) * (v.X - mx));
        var syy = list.Sum(v => (v.Y - my) * (v.Y - my));
        return sxy / Math.Sqrt(sxx * syy);
    }

    private sealed class ToleranceComparer(double tolerance) : IEqualityComparer<double>
    {
        public bool Equals(double x, double y) => Math.Abs(x - y) <= tolerance;

        public int GetHashCode(double obj) => 0;
    }
}
