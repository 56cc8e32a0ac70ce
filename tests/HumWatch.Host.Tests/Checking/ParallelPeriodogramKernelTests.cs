using HumWatch.Core.Spectra;
using HumWatch.Host.Checking;
using Xunit;

namespace HumWatch.Host.Tests.Checking;

public sealed class ParallelPeriodogramKernelTests
{
    [Theory]
    [InlineData(2000, 1, 2)]
    [InlineData(2000, 5, 2)]
    [InlineData(1001, 9, 3)]
    [InlineData(4096, 32, 2)]
    public void Splitting_channels_over_threads_gives_the_same_periodograms(int segmentLength, int channels, int ways)
    {
        var random = new Random(segmentLength + channels);
        var stride = segmentLength + 3;
        var samples = new double[(channels * stride) + 7];
        for (var i = 0; i < samples.Length; i++)
        {
            samples[i] = (random.NextDouble() - 0.5) * 40;
        }

        var single = PeriodogramKernels.Create(segmentLength, 500);
        var parallel = ParallelPeriodogramKernel.Create(segmentLength, 500, ways);
        var expected = new double[channels * single.BinCount];
        var actual = new double[channels * single.BinCount];

        single.Compute(samples, channels, stride, expected);
        parallel.Compute(samples, channels, stride, actual);

        // Each channel goes through the same kernel code either way, in the same vector groups.
        for (var i = 0; i < expected.Length; i++)
        {
            Assert.True(expected[i] == actual[i], $"channel {i / single.BinCount} bin {i % single.BinCount}: {expected[i]} vs {actual[i]}");
        }
    }

    [Fact]
    public void One_way_is_the_plain_kernel_and_bad_buffers_are_refused_naming_them()
    {
        Assert.IsNotType<ParallelPeriodogramKernel>(ParallelPeriodogramKernel.Create(2000, 500, 1));
        var parallel = ParallelPeriodogramKernel.Create(2000, 500, 2);

        var error = Assert.Throws<ArgumentException>(() => parallel.Compute(new double[100], 8, 2000, new double[8 * 1001]));

        Assert.Equal("samples", error.ParamName);
    }
}
