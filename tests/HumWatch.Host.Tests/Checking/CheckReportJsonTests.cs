using System.Text.Json;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Reporting;
using HumWatch.Host.Checking;
using Xunit;

namespace HumWatch.Host.Tests.Checking;

public sealed class CheckReportJsonTests
{
    [Theory]
    [InlineData(Verdict.Pass, "pass", 0)]
    [InlineData(Verdict.Warn, "warn", 0)]
    [InlineData(Verdict.Fail, "fail", 1)]
    [InlineData(Verdict.Error, "error", 2)]
    public void The_verdict_is_written_as_lower_case_text_and_sets_the_exit_code(Verdict verdict, string text, int exitCode)
    {
        // README "Checking a recording": exit 0 pass (or warn), 1 contaminated past the limits, 2 unreadable input.
        var report = new CheckReport { File = "a.edf", Verdict = verdict };

        var json = JsonSerializer.Serialize(report, CheckReportJsonContext.Default.CheckReport);
        using var document = JsonDocument.Parse(json);

        Assert.Equal(text, document.RootElement.GetProperty("verdict").GetString());
        Assert.False(document.RootElement.TryGetProperty("exitCode", out _));
        Assert.Equal(exitCode, report.ExitCode);
        Assert.Equal(verdict, JsonSerializer.Deserialize(json, CheckReportJsonContext.Default.CheckReport)!.Verdict);
    }

    [Fact]
    public void A_report_with_an_unknown_verdict_text_is_refused_with_the_value_named()
    {
        var ex = Assert.Throws<JsonException>(() => JsonSerializer.Deserialize("""{"file":"a.edf","verdict":"Pass"}""", CheckReportJsonContext.Default.CheckReport));
        Assert.Contains("'Pass'", ex.Message, StringComparison.Ordinal);
    }
}
