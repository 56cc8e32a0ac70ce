using HumWatch.Formats.Tests.Support;

namespace HumWatch.Formats.Tests;

/// <summary>
/// Every input the fuzzing harness (tests/HumWatch.Fuzz, docs/reliability.md "Fuzzing") recorded as a crash, with the
/// outcome it gets now: a typed error naming the file and the problem, within the harness's allocation budget.
/// </summary>
public sealed class FuzzRegressionTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Theory]
    // A time column whose first steps are tiny made a rate of up to 17 GHz, and the chunk buffer was sized from
    // 2 s at that rate (16 Mi floats, 64 MiB) for a file of a few rows. The buffer is now sized from the rows counted at open.
    [InlineData("csv", "fast_rate_1.csv", "line 2, column 2 ('Cz'): ")]
    [InlineData("csv", "fast_rate_2.csv", "line 3, column 1: time step 0.004 s differs from the sample interval 0 s (16666666667 Hz)")]
    [InlineData("csv", "fast_rate_3.csv", "line 2: 3 fields, but the header has 7 columns")]
    [InlineData("csv", "fast_rate_4.csv", "line 3, column 1: time step 0.025376 s differs from the sample interval 0.0000028 s (357143 Hz)")]
    public void Input_found_by_fuzzing_is_refused_naming_the_file_within_the_allocation_budget(string target, string name, string problemStart)
    {
        var path = _folder.Write(name, File.ReadAllBytes(Fixtures.Fuzz(target, name)));
        var before = GC.GetAllocatedBytesForCurrentThread();

        var ex = Assert.Throws<RecordingFormatException>(() =>
        {
            using var reader = RecordingReader.Open(path);
            foreach (var _ in reader.ReadChunks(2.0))
            {
            }
        });

        var allocated = GC.GetAllocatedBytesForCurrentThread() - before;
        Assert.Equal(path, ex.Path);
        Assert.StartsWith(problemStart, ex.Problem, StringComparison.Ordinal);

        // The harness's budget for a recording: 4 MiB + 16 bytes per input byte (tests/HumWatch.Fuzz/RecordingTarget.cs).
        var budget = (4L << 20) + (16L * new FileInfo(path).Length);
        Assert.True(allocated <= budget, $"{allocated} bytes allocated, budget {budget}");
    }
}
