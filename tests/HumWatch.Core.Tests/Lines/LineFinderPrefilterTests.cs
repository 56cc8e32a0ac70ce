using HumWatch.Core.Lines;
using Xunit;

namespace HumWatch.Core.Tests.Lines;

/// <summary>
/// The vector prefilter of <see cref="LineFinder"/> may only skip work: on any spectrum it must return exactly what the
/// plain scalar scan (<see cref="ScalarLineFinderReference"/>) returns, bit for bit, at every vector width.
/// </summary>
public sealed class LineFinderPrefilterTests
{
    private static readonly int[] VectorWidths = [512, 256, 0];

    [Fact]
    public void Prefiltered_finder_matches_the_scalar_scan_bit_for_bit_on_seeded_random_spectra()
    {
        var random = new Random(20240611);
        var spectra = 0;
        var peaksSeen = 0;
        var fullBuffers = 0;
        for (var trial = 0; trial < 400; trial++)
        {
            var bins = trial < 40 ? 16 + trial : random.Next(16, 2400);
            var options = RandomOptions(random, trial);
            var binWidthHz = 0.125 * (1 + random.Next(4));
            var dof = trial % 5 == 0 ? 2 : 2 + (random.NextDouble() * 10);
            double[]? correlations = trial % 3 == 2 ? [0.3 + (random.NextDouble() * 0.2), random.NextDouble() * 0.05] : null;
            var reference = new ScalarLineFinderReference(options, bins, binWidthHz, dof, correlations);
            var finders = Array.ConvertAll(VectorWidths, bits => new LineFinder(options, bins, binWidthHz, dof, bits, correlations));
            var expected = new ChannelPeak[reference.Capacity];
            var actual = new ChannelPeak[reference.Capacity];
            for (var s = 0; s < 6; s++)
            {
                var psd = RandomSpectrum(random, bins, s);
                var expectedCount = reference.Find(psd, expected);
                spectra++;
                peaksSeen += expectedCount;
                fullBuffers += expectedCount == expected.Length ? 1 : 0;
                for (var f = 0; f < finders.Length; f++)
                {
                    var count = finders[f].Find(psd, actual);
                    Assert.True(expectedCount == count, $"trial {trial}, spectrum {s}, {VectorWidths[f]}-bit: {count} peaks, scalar scan {expectedCount}");
                    for (var i = 0; i < count; i++)
                    {
                        AssertSameBits(expected[i], actual[i], $"trial {trial}, spectrum {s}, {VectorWidths[f]}-bit, peak {i}");
                    }
                }
            }
        }

        // The comparison means something only if the spectra produced many peaks, and often more than the buffer holds.
        Assert.Equal(2400, spectra);
        Assert.True(peaksSeen > 3000, $"only {peaksSeen} peaks over all spectra");
        Assert.True(fullBuffers > 50, $"only {fullBuffers} spectra filled the peak buffer");
    }

    [Fact]
    public void Prefiltered_finder_matches_the_scalar_scan_on_tones_at_every_bin_near_DC_and_Nyquist()
    {
        const int bins = 201;
        var options = new LineFinderOptions { MinFrequencyHz = 0, MinAmplitudeUvRms = 0, MinProminenceDb = 6 };
        var reference = new ScalarLineFinderReference(options, bins, 0.25, 5.8);
        var finders = Array.ConvertAll(VectorWidths, bits => new LineFinder(options, bins, 0.25, 5.8, bits));
        var expected = new ChannelPeak[reference.Capacity];
        var actual = new ChannelPeak[reference.Capacity];
        var found = 0;
        for (var at = 0; at < 14; at++)
        {
            foreach (var bin in new[] { at, bins - 1 - at })
            {
                // Flat floor of 1 with a Hann-shaped tone of 30 (≈ 15 dB) at the bin.
                var psd = new double[bins];
                Array.Fill(psd, 1.0);
                for (var d = -2; d <= 2; d++)
                {
                    if (bin + d >= 0 && bin + d < bins)
                    {
                        psd[bin + d] += 30.0 * (d == 0 ? 1 : Math.Abs(d) == 1 ? 0.5 : 0.02);
                    }
                }

                var expectedCount = reference.Find(psd, expected);
                found += expectedCount;
                foreach (var finder in finders)
                {
                    Assert.Equal(expectedCount, finder.Find(psd, actual));
                    for (var i = 0; i < expectedCount; i++)
                    {
                        AssertSameBits(expected[i], actual[i], $"tone at bin {bin}");
                    }
                }
            }
        }

        Assert.True(found >= 20, $"only {found} edge tones found; the test would not reach the edges");
    }

    [Fact]
    public void Peaks_exactly_at_the_near_level_threshold_are_decided_as_the_scalar_scan_decides_them()
    {
        // Peaks set to exactly ratio × near level (kept: the test is "below rejects") or one ulp below it (rejected), with
        // inexact neighbour values so that any other summation order of the near level would move the threshold by an ulp.
        const int bins = 1601;
        var options = new LineFinderOptions { MinFrequencyHz = 0, MinAmplitudeUvRms = 0, MinProminenceDb = 10, FloorHalfWidthHz = 2 };
        var ratio = Math.Pow(10, options.MinProminenceDb / 10);
        var random = new Random(77);
        var reference = new ScalarLineFinderReference(options, bins, 0.25, 1e9);
        var finders = Array.ConvertAll(VectorWidths, bits => new LineFinder(options, bins, 0.25, 1e9, bits));
        var expected = new ChannelPeak[reference.Capacity];
        var actual = new ChannelPeak[reference.Capacity];
        var kept = 0;
        for (var trial = 0; trial < 200; trial++)
        {
            var psd = new double[bins];
            Array.Fill(psd, 0.1);
            var first = 6 + random.Next(8);
            var placed = 0;
            for (var k = first; k < bins - 6 && placed < 32; k += 20 + random.Next(4), placed++)
            {
                for (var d = 1; d <= 5; d++)
                {
                    var level = d == 1 ? 0.5 : d == 2 ? 0.9 : 1.0;
                    psd[k - d] = level + (random.NextDouble() * 0.37);
                    psd[k + d] = level + (random.NextDouble() * 0.37);
                }

                // NearLevel's order: 0 + P[k−3] + P[k+3] + P[k−4] + P[k+4] + P[k−5] + P[k+5], then ÷ 6.
                var sum = 0.0;
                for (var d = 3; d <= 5; d++)
                {
                    sum += psd[k - d];
                    sum += psd[k + d];
                }

                var threshold = sum / 6 * ratio;
                psd[k] = random.Next(2) == 0 ? threshold : Math.BitDecrement(threshold);
            }

            var expectedCount = reference.Find(psd, expected);
            kept += expectedCount;
            foreach (var finder in finders)
            {
                Assert.Equal(expectedCount, finder.Find(psd, actual));
                for (var i = 0; i < expectedCount; i++)
                {
                    AssertSameBits(expected[i], actual[i], $"trial {trial}");
                }
            }
        }

        // About half of the 32 peaks per spectrum sit exactly at the threshold and are kept by the scalar scan.
        Assert.True(kept > 200 * 10, $"only {kept} threshold peaks kept; the spectra do not reach the threshold test");
    }

    private static LineFinderOptions RandomOptions(Random random, int trial) => new()
    {
        MinFrequencyHz = trial % 3 == 0 ? 0 : random.NextDouble() * 3,
        MaxFrequencyHz = trial % 4 == 0 ? 40 + (random.NextDouble() * 200) : 0,
        MinProminenceDb = trial % 2 == 0 ? 3 + (random.NextDouble() * 9) : 10,
        FloorHalfWidthHz = 0.5 + (random.NextDouble() * 3),
        MinAmplitudeUvRms = trial % 3 == 1 ? 0 : random.NextDouble() * 0.3,
        MaxPeaksPerChannel = trial % 4 == 1 ? 1 + random.Next(4) : 32,
    };

    // Kinds: χ²-like noise on a 1/f slope with tones; ties (values on a coarse grid, plateaus); zeros; sparse
    // non-finite values; all zero; a steep rise to Nyquist.
    private static double[] RandomSpectrum(Random random, int bins, int kind)
    {
        var psd = new double[bins];
        for (var b = 0; b < bins; b++)
        {
            // Mean of three exponentials: a K = 3 Welch bin of white noise (common practice, no source).
            var chi = (-Math.Log(1 - random.NextDouble()) - Math.Log(1 - random.NextDouble()) - Math.Log(1 - random.NextDouble())) / 3;
            psd[b] = chi * (kind == 5 ? 1 + (b * 0.01) : 10 / (1 + (b * 0.05)));
        }

        var tones = random.Next(0, 12);
        for (var t = 0; t < tones; t++)
        {
            var at = random.Next(0, 4) == 0 ? (random.Next(2) == 0 ? random.Next(0, 9) : bins - 1 - random.Next(0, 9)) : random.Next(bins);
            var height = psd[at] * Math.Pow(10, random.NextDouble() * 3);
            for (var d = -2; d <= 2; d++)
            {
                if (at + d >= 0 && at + d < bins)
                {
                    psd[at + d] += height * (d == 0 ? 1 : Math.Abs(d) == 1 ? random.NextDouble() * 0.6 : random.NextDouble() * 0.03);
                }
            }
        }

        switch (kind)
        {
            case 1:
                for (var b = 0; b < bins; b++)
                {
                    psd[b] = Math.Round(psd[b] * 2) / 2;
                }

                break;
            case 2:
                for (var b = 0; b < bins; b++)
                {
                    if (random.Next(5) == 0)
                    {
                        psd[b] = 0;
                    }
                }

                break;
            case 3:
                psd[random.Next(bins)] = double.NaN;
                psd[random.Next(bins)] = double.PositiveInfinity;
                psd[random.Next(bins)] = -0.0;
                break;
            case 4:
                if (random.Next(3) == 0)
                {
                    Array.Clear(psd);
                }

                break;
        }

        return psd;
    }

    private static void AssertSameBits(ChannelPeak expected, ChannelPeak actual, string where)
    {
        Assert.True(expected.Bin == actual.Bin, $"{where}: bin {actual.Bin}, scalar scan {expected.Bin}");
        AssertSameBits(expected.FrequencyHz, actual.FrequencyHz, where + " frequency");
        AssertSameBits(expected.AmplitudeUvRms, actual.AmplitudeUvRms, where + " amplitude");
        AssertSameBits(expected.ProminenceDb, actual.ProminenceDb, where + " prominence");
        AssertSameBits(expected.FloorUv2PerHz, actual.FloorUv2PerHz, where + " floor");
        AssertSameBits(expected.BinFalseAlarmProbability, actual.BinFalseAlarmProbability, where + " false-alarm probability");
    }

    private static void AssertSameBits(double expected, double actual, string where) =>
        Assert.True(BitConverter.DoubleToInt64Bits(expected) == BitConverter.DoubleToInt64Bits(actual), $"{where}: {actual:R}, scalar scan {expected:R}");
}
