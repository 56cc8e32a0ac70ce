using HumWatch.Core.Alerts;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Findings;
using HumWatch.Core.Reporting;
using HumWatch.Core.Summaries;
using Xunit;

namespace HumWatch.Core.Tests.Findings;

public sealed class FindingKeyTests
{
    public static TheoryData<string> Keys() => new()
    {
        "*",
        "mains/h1",
        "mains/h12",
        "display 75 Hz/h2",
        "display 143.856 Hz/h1",
        "site-tone:pump room drive/h1",
        "site-tone:fan/h2/h3", // a name may hold "/h…"; the last one is the harmonic
        "unidentified/37.25Hz",
        "unidentified/0.00Hz",
        "unidentified/1234.57Hz",
        "fault/Fp1/flat",
        "fault/EEG A1-A2/clipped",
        "fault/T3/x/non-finite", // a label may hold "/"; the last part is the fault
        "fault//flat",
    };

    [Theory]
    [MemberData(nameof(Keys))]
    public void Every_written_shape_reads_back_to_a_key_that_writes_the_same_text(string text)
    {
        var key = FindingKey.Parse(text);

        Assert.True(key.IsRecognised);
        Assert.Equal(text, key.ToString());
        Assert.Equal(key, FindingKey.Parse(key.ToString()));
    }

    [Fact]
    public void Keys_built_from_their_parts_round_trip_through_text()
    {
        var tone = new SourceMatch(SourceKind.SiteTone, "pump room drive", 16.7, 2, true, 16.6, 0.1);
        FindingKey[] keys =
        [
            FindingKey.All,
            FindingKey.Mains(3),
            FindingKey.Display("display 75 Hz", 2),
            FindingKey.ForLine(tone, 33.4),
            FindingKey.Unidentified(37.254),
            FindingKey.Unidentified(1e-9),
            FindingKey.ChannelFault("Cz", ChannelFaultKind.NonFinite),
        ];
        foreach (var key in keys)
        {
            Assert.Equal(key, FindingKey.Parse(key.ToString()));
        }

        Assert.Equal("site-tone:pump room drive/h2", keys[3].ToString());
        Assert.Equal("unidentified/37.25Hz", keys[4].ToString());
        Assert.Equal(37.25, keys[4].FrequencyHz);
        Assert.Equal("fault/Cz/non-finite", keys[6].ToString());
        Assert.Equal(FindingKey.All, default);
        Assert.Equal("*", default(FindingKey).ToString());
    }

    [Fact]
    public void A_site_tone_key_of_the_older_spelling_is_the_same_finding_as_the_new_one()
    {
        var old = FindingKey.Parse("site:pump room drive/h1");

        Assert.Equal(FindingKey.SiteTone("pump room drive", 1), old);
        Assert.Equal(FindingKey.Parse("site-tone:pump room drive/h1"), old);
        Assert.Equal(old.GetHashCode(), FindingKey.Parse("site-tone:pump room drive/h1").GetHashCode());
        Assert.Equal("site-tone:pump room drive/h1", old.ToString());
        Assert.Equal(FindingCategory.SiteTone, old.Category);
        Assert.Equal("pump room drive", old.Name);
        Assert.Equal(1, old.Harmonic);
    }

    [Theory]
    [InlineData("mains/h3", FindingCategory.Mains, "mains", 3, null, null)]
    [InlineData("display 75 Hz/h2", FindingCategory.Display, "display 75 Hz", 2, null, null)]
    [InlineData("unidentified/37.25Hz", FindingCategory.Unidentified, "unidentified", null, 37.25, null)]
    [InlineData("unidentified/37.25", FindingCategory.Unidentified, "unidentified", null, 37.25, null)]
    [InlineData("fault/O1/clipped", FindingCategory.ChannelFault, "O1", null, null, ChannelFaultKind.Clipped)]
    public void Parts_are_read_from_the_text(string text, FindingCategory category, string name, int? harmonic, double? frequencyHz, ChannelFaultKind? fault)
    {
        var key = FindingKey.Parse(text);

        Assert.Equal(category, key.Category);
        Assert.Equal(name, key.Name);
        Assert.Equal(harmonic, key.Harmonic);
        Assert.Equal(frequencyHz, key.FrequencyHz);
        Assert.Equal(fault, key.FaultKind);
    }

    [Theory]
    [InlineData("something else")]
    [InlineData("unidentified/abcHz")]
    [InlineData("fault/Fp1/wobbly")]
    [InlineData("fault/Fp1")]
    [InlineData("mains/h0")]
    [InlineData("site:/h1")]
    [InlineData("/h2")]
    public void Text_of_no_known_shape_is_kept_as_it_was(string text)
    {
        var key = FindingKey.Parse(text);

        Assert.False(key.IsRecognised);
        Assert.Equal(FindingCategory.Unidentified, key.Category);
        Assert.Null(key.FrequencyHz);
        Assert.Equal(text, key.ToString());
        Assert.Equal(text, key.Label);
        Assert.NotEqual(FindingKey.Parse("other text"), key);
    }

    [Theory]
    [InlineData("mains/h3", "mains h3")]
    [InlineData("display 75 Hz/h2", "display 75 Hz h2")]
    [InlineData("site:pump room drive/h1", "site-tone pump room drive h1")]
    [InlineData("unidentified/37.25Hz", "unidentified 37.25 Hz")]
    [InlineData("fault/Fp1/flat", "Fp1 flat")]
    [InlineData("*", "any line")]
    public void Labels_are_short_and_use_the_one_spelling(string text, string label) =>
        Assert.Equal(label, FindingKey.Parse(text).Label);

    [Fact]
    public void The_bookkeeping_key_of_an_unidentified_line_is_its_nearest_bin()
    {
        // 0.25 Hz bins: 37.3 Hz lies nearest bin 149 (37.25 Hz); an identified line keeps its harmonic.
        Assert.Equal(FindingKey.Unidentified(37.25), FindingKey.ForLine(SourceMatch.None, 37.3, 0.25));
        var mains = new SourceMatch(SourceKind.Mains, "mains", 50, 3, false, 150, 0.02);
        Assert.Equal(FindingKey.Mains(3), FindingKey.ForLine(mains, 150.02, 0.25));
    }

    [Fact]
    public void Text_order_is_the_ordinal_order_of_the_texts()
    {
        FindingKey[] keys = [FindingKey.Unidentified(9), FindingKey.Mains(2), FindingKey.All, FindingKey.Display("display 60 Hz", 1), FindingKey.ChannelFault("Cz", ChannelFaultKind.Flat)];
        var texts = keys.Select(k => k.ToString()).ToList();
        texts.Sort(StringComparer.Ordinal);

        Assert.Equal(texts, keys.Order(FindingKey.TextOrder).Select(k => k.ToString()));
    }

    [Fact]
    public void Bad_parts_are_refused()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => FindingKey.Mains(0));
        Assert.Throws<ArgumentException>(() => FindingKey.SiteTone("", 1));
        Assert.Throws<ArgumentOutOfRangeException>(() => FindingKey.Unidentified(double.NaN));
        Assert.Throws<ArgumentOutOfRangeException>(() => FindingKey.Unidentified(-1));
        Assert.Throws<ArgumentNullException>(() => FindingKey.Parse(null!));
    }

    [Fact]
    public void Every_kind_severity_event_and_verdict_text_reads_back_to_its_value()
    {
        foreach (var value in Enum.GetValues<FindingCategory>())
        {
            Assert.True(FindingCategoryText.TryParse(value.ToText(), out var parsed));
            Assert.Equal(value, parsed);
        }

        foreach (var value in Enum.GetValues<SourceKind>())
        {
            Assert.True(SourceKindText.TryParse(value.ToText(), out var parsed));
            Assert.Equal(value, parsed);
            Assert.Equal(FindingCategoryText.Of(value).ToText(), value.ToText()); // one spelling for a line's kind
        }

        foreach (var value in Enum.GetValues<ChannelFaultKind>())
        {
            Assert.True(ChannelFaultKindText.TryParse(value.ToText(), out var parsed));
            Assert.Equal(value, parsed);
        }

        foreach (var value in Enum.GetValues<AlertSeverity>())
        {
            Assert.True(AlertSeverityText.TryParse(value.ToText(), out var parsed));
            Assert.Equal(value, parsed);
        }

        foreach (var value in Enum.GetValues<AlertEventKind>())
        {
            Assert.True(AlertEventKindText.TryParse(value.ToText(), out var parsed));
            Assert.Equal(value, parsed);
        }

        foreach (var value in Enum.GetValues<AlertClearReason>())
        {
            Assert.True(AlertClearReasonText.TryParse(value.ToText(), out var parsed));
            Assert.Equal(value, parsed);
        }

        foreach (var value in Enum.GetValues<Verdict>())
        {
            Assert.True(VerdictText.TryParse(value.ToText(), out var parsed));
            Assert.Equal(value, parsed);
        }

        foreach (var value in Enum.GetValues<DayVerdict>())
        {
            Assert.True(DayVerdictText.TryParse(value.ToText(), out var parsed));
            Assert.Equal(value, parsed);
        }

        Assert.Equal("site-tone", SourceKind.SiteTone.ToText());
        Assert.Equal("site-tone", FindingCategory.SiteTone.ToText());
        Assert.True(FindingCategoryText.TryParse("site", out var old)); // the kind stores held before
        Assert.Equal(FindingCategory.SiteTone, old);
        Assert.False(FindingCategoryText.TryParse("SiteTone", out _));
        Assert.False(VerdictText.TryParse("Pass", out _));
        Assert.False(SourceKindText.TryParse(null, out _));
    }
}
