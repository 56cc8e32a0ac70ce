using System.Text.Json;
using HumWatch.Core.Numerics;
using Xunit;

namespace HumWatch.Core.Tests.Numerics;

public sealed class MedianTests
{
    [Fact]
    public void Odd_count_gives_the_middle_value_and_even_count_the_mean_of_the_two_middle_values()
    {
        // NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.5.1 "Measures of Location": for odd N the median is
        // the middle sorted value, for even N the average of the two middle values (from memory).
        Assert.Equal(3.0, Median.Of([5.0, 1.0, 3.0]));
        Assert.Equal(2.5, Median.Of([4.0, 1.0, 3.0, 2.0]));
        Assert.Equal(7.0, Median.Of([7.0]));
        Assert.Equal(-1.5, Median.Of([-1.0, -2.0]));
    }

    [Fact]
    public void Empty_input_gives_NaN_as_numpy_does()
    {
        // numpy.median of an empty array is nan (python3-numpy 1.24.2, fixtures/median/median.json).
        Assert.True(Fixture().RootElement.GetProperty("emptyIsNaN").GetBoolean());
        Assert.True(double.IsNaN(Median.Of([])));
        Assert.True(double.IsNaN(Median.SortInPlace(Span<double>.Empty)));
    }

    [Fact]
    public void Agrees_with_numpy_on_seeded_samples()
    {
        // numpy.median, python3-numpy 1.24.2 via fixtures/median/make_median_fixture.py.
        using var json = Fixture();
        var cases = json.RootElement.GetProperty("cases").EnumerateArray().ToList();
        Assert.Contains(cases, c => c.GetProperty("values").GetArrayLength() % 2 == 0);
        Assert.Contains(cases, c => c.GetProperty("values").GetArrayLength() % 2 == 1);
        foreach (var c in cases)
        {
            var values = c.GetProperty("values").EnumerateArray().Select(v => v.GetDouble()).ToArray();
            Assert.Equal(c.GetProperty("median").GetDouble(), Median.Of(values), 12);
            Assert.Equal(c.GetProperty("median").GetDouble(), Median.SortInPlace(values), 12);
        }
    }

    [Fact]
    public void Of_leaves_the_order_alone_and_SortInPlace_sorts()
    {
        double[] values = [3, 1, 2];
        Assert.Equal(2, Median.Of(values));
        Assert.Equal([3.0, 1.0, 2.0], values);
        Assert.Equal(2, Median.SortInPlace(values));
        Assert.Equal([1.0, 2.0, 3.0], values);
    }

    private static JsonDocument Fixture() =>
        JsonDocument.Parse(File.ReadAllText(Path.Combine(AppContext.BaseDirectory, "fixtures", "median", "median.json")));
}
