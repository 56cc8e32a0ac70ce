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
        // REFERENCES §1 (Welch 1967 variance with Hann ρ = 1/36 at 50 % overlap, computed): ν ≈ 1.9·K for large K.
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
}
