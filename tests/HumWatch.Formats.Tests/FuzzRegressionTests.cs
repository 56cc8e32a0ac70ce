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
    // A time column whose first steps are tiny made a rate of up to 2·10³⁴ Hz, and the chunk buffer was sized from
    // 2 s at that rate (16 Mi floats, 64 MiB) for a file of a few rows. The buffer is now sized from the rows counted
    // at open, and a rate over 1 MHz is refused.
    [InlineData("csv", "fast_rate_1.csv", "sample rate 2E+34 Hz (a step of 5E-35 s over the first rows of the time column) is more than 1 MHz")]
    [InlineData("csv", "fast_rate_2.csv", "sample rate 1.66667E+10 Hz (a step of 6E-11 s over the first rows of the time column) is more than 1 MHz")]
    [InlineData("csv", "fast_rate_3.csv", "line 2: 3 fields, but the header has 7 columns")]
    [InlineData("csv", "fast_rate_4.csv", "line 3, column 1: time step 0.025376 s differs from the sample interval 0.0000028 s (357143 Hz)")]
    // EDF+D with a record duration of 1e-300 s: 3.2·10³⁰¹ Hz, so the second record's onset (0.125 s) became a sample
    // index past 2⁶³ (the cast saturated) and its chunk's end wrapped round. Now refused at open by the rate.
    [InlineData("edf", "absurd_rate_index_overflow.edf", "signal 1 of 2 ('O1') has 32 samples per data record of '1e-300' s, 3.2E+301 Hz; more than 1 MHz")]
    public void Input_found_by_fuzzing_is_refused_naming_the_file_within_the_allocation_budget(string target, string name, string problemStart)
    {
        var path = _folder.Write(name, File.ReadAllBytes(Fixtures.Fuzz(target, name)));
        var (ex, allocated) = Allocation.Measure(() => Assert.Throws<RecordingFormatException>(() =>
        {
            using var reader = RecordingReader.Open(path);
            foreach (var _ in reader.ReadChunks(2.0))
            {
            }
        }));

        Assert.Equal(path, ex.Path);
        Assert.StartsWith(problemStart, ex.Problem, StringComparison.Ordinal);

        // The harness's budget for a recording: 4 MiB + 16 bytes per input byte (tests/HumWatch.Fuzz/RecordingTarget.cs).
        var budget = (4L << 20) + (16L * new FileInfo(path).Length);
        Assert.True(allocated <= budget, $"{allocated} bytes allocated, budget {budget}");
    }
}
