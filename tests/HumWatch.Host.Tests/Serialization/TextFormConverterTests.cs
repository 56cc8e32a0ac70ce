using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Core.Reporting;
using HumWatch.Core.Summaries;
using HumWatch.Host.Serialization;
using Xunit;

namespace HumWatch.Host.Tests.Serialization;

public sealed class TextFormConverterTests
{
    /// <summary>Every text-form converter the service registers; the documented-spelling tests use the same set.</summary>
    internal static readonly JsonSerializerOptions Options = new()
    {
        Converters = { new VerdictJsonConverter(), new DayVerdictJsonConverter(), new AlertSeverityJsonConverter(), new FindingCategoryJsonConverter(), new FindingKeyJsonConverter() },
    };

    [Fact]
    public void Values_are_written_as_their_one_text_form_and_read_back()
    {
        Assert.Equal("\"warn\"", JsonSerializer.Serialize(Verdict.Warn, Options));
        Assert.Equal("\"no data\"", JsonSerializer.Serialize(DayVerdict.NoData, Options));
        Assert.Equal("\"marked\"", JsonSerializer.Serialize(AlertSeverity.Marked, Options));
        Assert.Equal("\"site-tone\"", JsonSerializer.Serialize(FindingCategory.SiteTone, Options));
        Assert.Equal("\"mains/h1\"", JsonSerializer.Serialize(FindingKey.Mains(1), Options));

        Assert.Equal(Verdict.Fail, JsonSerializer.Deserialize<Verdict>("\"fail\"", Options));
        Assert.Equal(DayVerdict.Pass, JsonSerializer.Deserialize<DayVerdict>("\"pass\"", Options));
        Assert.Equal(AlertSeverity.Severe, JsonSerializer.Deserialize<AlertSeverity>("\"severe\"", Options));
        Assert.Equal(FindingCategory.SiteTone, JsonSerializer.Deserialize<FindingCategory>("\"site\"", Options)); // the spelling older files hold
        Assert.Equal(FindingKey.Mains(1), JsonSerializer.Deserialize<FindingKey>("\"mains/h1\"", Options));
    }

    [Fact]
    public void Text_that_is_no_form_names_what_is_accepted()
    {
        var verdict = Assert.Throws<JsonException>(() => JsonSerializer.Deserialize<Verdict>("\"Warn\"", Options));
        Assert.Equal("'Warn' is not a verdict (pass, warn, fail, error) value.", verdict.Message);

        var day = Assert.Throws<JsonException>(() => JsonSerializer.Deserialize<DayVerdict>("3", Options));
        Assert.Equal("'Number' is not a day verdict (no data, pass, warn, fail) value.", day.Message);

        var severity = Assert.Throws<JsonException>(() => JsonSerializer.Deserialize<AlertSeverity>("\"loud\"", Options));
        Assert.Equal("'loud' is not a severity (none, minor, marked, severe) value.", severity.Message);

        Assert.Throws<JsonException>(() => JsonSerializer.Deserialize<FindingKey>("\"\"", Options));
    }
}
