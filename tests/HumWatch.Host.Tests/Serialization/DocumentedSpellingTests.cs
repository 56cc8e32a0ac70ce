using System.Text.Json;
using System.Text.Json.Serialization;
using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Core.Reporting;
using HumWatch.Core.Summaries;
using HumWatch.Host.Serialization;
using Xunit;

namespace HumWatch.Host.Tests.Serialization;

public sealed class DocumentedSpellingTests
{
    private static readonly JsonSerializerOptions Json = TextFormConverterTests.Options;

    [Fact]
    public void Every_verdict_is_written_as_its_documented_text_and_reads_back()
    {
        // README, check --json: verdict is pass, warn, fail or error.
        Assert.Equal(["pass", "warn", "fail", "error"], RoundTripEvery<Verdict>());
    }

    [Fact]
    public void Every_day_verdict_is_written_as_its_documented_text_and_reads_back()
    {
        // docs/summaries.md: verdicts pass/warn/fail/no data.
        Assert.Equal(["no data", "pass", "warn", "fail"], RoundTripEvery<DayVerdict>());
    }

    [Fact]
    public void Every_severity_reads_back_and_the_published_ones_have_their_documented_text()
    {
        // docs/messages.md and docs/summaries.md: severities minor/marked/severe; "none" is the level before any.
        Assert.Equal(["none", "minor", "marked", "severe"], RoundTripEvery<AlertSeverity>());
    }

    [Fact]
    public void Every_category_reads_back_with_one_spelling_per_kind()
    {
        // docs/messages.md: kind is mains, display, site-tone, unidentified or fault; "all" is the stream as a whole.
        Assert.Equal(["all", "mains", "display", "site-tone", "unidentified", "fault"], RoundTripEvery<FindingCategory>());
    }

    [Theory]
    [InlineData("mains/h1")] // docs/messages.md key shapes, one each
    [InlineData("display 75 Hz/h2")]
    [InlineData("site-tone:pump room drive/h1")]
    [InlineData("unidentified/37.25Hz")]
    [InlineData("fault/Fp1/flat")]
    public void Every_documented_key_shape_round_trips_through_JSON(string key)
    {
        var json = JsonSerializer.Serialize(FindingKey.Parse(key), Json);

        Assert.Equal(JsonSerializer.Serialize(key), json);
        Assert.Equal(key, JsonSerializer.Deserialize<FindingKey>(json, Json).ToString());
    }

    [Theory]
    [InlineData("\"Pass\"")] // C# spelling, not the text form
    [InlineData("\"maybe\"")]
    [InlineData("0")]
    public void Text_that_is_no_verdict_is_refused_saying_what_it_takes(string json)
    {
        var ex = Assert.Throws<JsonException>(() => JsonSerializer.Deserialize<Verdict>(json, Json));

        Assert.Contains("pass, warn, fail, error", ex.Message, StringComparison.Ordinal);
    }

    /// <summary>Writes every value of <typeparamref name="T"/>, checks it reads back to itself, and returns the texts in value order.</summary>
    private static List<string> RoundTripEvery<T>()
        where T : struct, Enum
    {
        var texts = new List<string>();
        foreach (var value in Enum.GetValues<T>())
        {
            var json = JsonSerializer.Serialize(value, Json);
            Assert.Equal(value, JsonSerializer.Deserialize<T>(json, Json));
            texts.Add(JsonSerializer.Deserialize<string>(json)!);
        }

        return texts;
    }
}
