using Xunit;

namespace HumWatch.Core.Tests.Spectra;

internal static class SpectraAssert
{
    /// <summary>Relative error per bin ≤ <paramref name="relativeTolerance"/> for bins above <paramref name="floorFraction"/> of the maximum.</summary>
    public static void BinsClose(ReadOnlySpan<double> expected, ReadOnlySpan<double> actual, double relativeTolerance, double floorFraction, string what)
    {
        Assert.True(expected.Length == actual.Length, $"{what}: {actual.Length} bins, expected {expected.Length}.");
        double max = 0;
        for (var k = 0; k < expected.Length; k++)
        {
            max = Math.Max(max, Math.Abs(expected[k]));
        }

        Assert.True(max > 0, $"{what}: reference is all zero.");
        for (var k = 0; k < expected.Length; k++)
        {
            if (Math.Abs(expected[k]) <= floorFraction * max)
            {
                Assert.True(Math.Abs(actual[k] - expected[k]) <= floorFraction * max, $"{what}: bin {k} {actual[k]} vs {expected[k]} (below floor).");
                continue;
            }

            var relative = Math.Abs(actual[k] - expected[k]) / Math.Abs(expected[k]);
            Assert.True(relative <= relativeTolerance, $"{what}: bin {k} {actual[k]:R} vs {expected[k]:R}, relative error {relative:E3} > {relativeTolerance:E1}.");
        }
    }
}
