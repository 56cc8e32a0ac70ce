using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Findings;
using HumWatch.Host.Publishing;
using HumWatch.Host.Tests.Publishing.Support;
using Xunit;

namespace HumWatch.Host.Tests.Publishing;

public sealed class MessagesTests
{
    private static JsonElement Parse(byte[] body) => JsonDocument.Parse(body).RootElement.Clone();

    [Fact]
    public void Raised_event_becomes_an_alert_body_with_camel_case_fields()
    {
        var (kind, body) = Messages.For(Some.Raised());
        Assert.Equal("alert", kind);
        var json = Parse(body);
        Assert.Equal(1, json.GetProperty("v").GetInt32());
        Assert.Equal("room-a", json.GetProperty("stream").GetString());
        Assert.Equal("mains", json.GetProperty("kind").GetString());
        Assert.Equal("mains", json.GetProperty("source").GetString());
        Assert.Equal(1, json.GetProperty("harmonic").GetInt32());
        Assert.False(json.GetProperty("aliased").GetBoolean());
        Assert.Equal(50.02, json.GetProperty("frequencyHz").GetDouble());
        Assert.Equal(6.5, json.GetProperty("amplitudeUvRms").GetDouble());
        Assert.Equal(0.75, json.GetProperty("channelShare").GetDouble());
        Assert.Equal(2.5e-12, json.GetProperty("falseAlarmProbability").GetDouble());
        Assert.Equal("marked", json.GetProperty("severity").GetString());
        Assert.Equal(["Cz", "Fp1"], json.GetProperty("worstChannels").EnumerateArray().Select(e => e.GetString()));
        Assert.Equal(Some.Utc, json.GetProperty("utc").GetDateTimeOffset());
        Assert.Equal(JsonValueKind.Null, json.GetProperty("previousSeverity").ValueKind);
    }

    [Fact]
    public void Every_alert_body_names_the_publishing_instance_when_given_one()
    {
        AlertEvent[] events = [Some.Raised(), Some.SeverityChanged(), Some.Cleared()];
        foreach (var alertEvent in events)
        {
            Assert.Equal("lab-north", Parse(Messages.For(alertEvent, "lab-north").Body).GetProperty("instance").GetString());
            Assert.Equal(JsonValueKind.Null, Parse(Messages.For(alertEvent).Body).GetProperty("instance").ValueKind);
        }

        var status = Parse(Messages.For(new StatusMessage(1, "room-a", Some.Utc, 10, 1, 0, 5, 0, 0, null) { Instance = "lab-north" }));
        Assert.Equal("lab-north", status.GetProperty("instance").GetString());
    }

    [Fact]
    public void Severity_change_names_both_severities()
    {
        var (kind, body) = Messages.For(Some.SeverityChanged());
        Assert.Equal("alert", kind);
        var json = Parse(body);
        Assert.Equal("severity", json.GetProperty("event").GetString());
        Assert.Equal("marked", json.GetProperty("previousSeverity").GetString());
        Assert.Equal("severe", json.GetProperty("severity").GetString());
        Assert.Equal(4e-30, json.GetProperty("falseAlarmProbability").GetDouble());
    }

    [Fact]
    public void Raised_fault_has_no_false_alarm_probability()
    {
        var fault = new AlertRaised("room-a", FindingKey.ChannelFault("Cz", ChannelFaultKind.Flat), AlertCategory.ChannelFault, SourceMatch.None, ChannelFaultKind.Flat,
            12, Some.Utc, 4, Some.Utc.AddSeconds(-8), double.NaN, double.NaN, 0.25, ["Cz"], "Cz is flat.", AlertSeverity.Marked);

        var json = Parse(Messages.For(fault).Body);

        Assert.Equal(JsonValueKind.Null, json.GetProperty("falseAlarmProbability").ValueKind);
    }

    [Fact]
    public void Cleared_fault_becomes_a_clear_body_with_nulls_for_missing_numbers()
    {
        var cleared = new AlertCleared("room-b", FindingKey.ChannelFault("O1", ChannelFaultKind.Clipped), AlertCategory.ChannelFault, SourceMatch.None, ChannelFaultKind.Clipped,
            50, Some.Utc, double.NaN, AlertClearReason.StreamEnded, 20, double.NaN, AlertSeverity.Marked, AlertSeverity.Marked);
        var (kind, body) = Messages.For(cleared);
        Assert.Equal("clear", kind);
        var json = Parse(body);
        Assert.Equal("fault", json.GetProperty("kind").GetString());
        Assert.Equal("clipped", json.GetProperty("fault").GetString());
        Assert.Equal("stream ended", json.GetProperty("reason").GetString());
        Assert.Equal(JsonValueKind.Null, json.GetProperty("frequencyHz").ValueKind);
        Assert.Equal(JsonValueKind.Null, json.GetProperty("peakAmplitudeUvRms").ValueKind);
        Assert.Equal(20, json.GetProperty("durationSeconds").GetDouble());
    }

    [Fact]
    public void Status_body_carries_counters_and_lag()
    {
        var json = Parse(Messages.For(new StatusMessage(1, "room-a", Some.Utc, 1200, 3, 1, 600, 2, 1, 0.4)));
        Assert.Equal(1, json.GetProperty("v").GetInt32());
        Assert.Equal(1200, json.GetProperty("framesAnalysed").GetInt64());
        Assert.Equal(3, json.GetProperty("linesPresent").GetInt32());
        Assert.Equal(600, json.GetProperty("chunksAccepted").GetInt64());
        Assert.Equal(2, json.GetProperty("chunksDropped").GetInt64());
        Assert.Equal(1, json.GetProperty("chunksRejected").GetInt64());
        Assert.Equal(0.4, json.GetProperty("lagSeconds").GetDouble());

        var noLag = Parse(Messages.For(new StatusMessage(1, "room-a", Some.Utc, 0, 0, 0, 0, 0, 0, double.NaN)));
        Assert.Equal(JsonValueKind.Null, noLag.GetProperty("lagSeconds").ValueKind);
    }

    [Fact]
    public void A_site_tone_alert_uses_the_one_spelling_in_kind_and_key()
    {
        // docs/messages.md: kind "site-tone", key "site-tone:<tone name>/h<n>".
        var tone = new SourceMatch(SourceKind.SiteTone, "pump room drive", 16.7, 2, false, 33.4, 0);
        var raised = Some.Raised() with { Key = FindingKey.ForLine(tone, 33.4), Source = tone };

        var json = Parse(Messages.For(raised).Body);

        Assert.Equal("site-tone", json.GetProperty("kind").GetString());
        Assert.Equal("site-tone:pump room drive/h2", json.GetProperty("key").GetString());
        Assert.Equal("pump room drive", json.GetProperty("source").GetString());
        Assert.Equal(2, json.GetProperty("harmonic").GetInt32());
        Assert.Equal("raised", json.GetProperty("event").GetString());
    }

    [Fact]
    public void Topic_is_kind_slash_stream()
    {
        Assert.Equal("summary/room-a", Messages.Topic(Messages.SummaryKind, "room-a"));
    }
}
