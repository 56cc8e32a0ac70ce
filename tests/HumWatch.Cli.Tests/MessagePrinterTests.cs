using System.Text;
using HumWatch.Cli.Listening;
using Xunit;

namespace HumWatch.Cli.Tests;

public sealed class MessagePrinterTests
{
    [Fact]
    public void An_alert_line_names_frequency_source_harmonic_severity_amplitude_and_strongest_channels()
    {
        var body = """{"v":1,"stream":"room-1","key":"mains/h3","event":"raised","kind":"mains","source":"mains","harmonic":3,"aliased":true,"frequencyHz":150.02,"amplitudeUvRms":2.71,"channelShare":0.25,"worstChannels":["O1","O2"],"severity":"minor","suggestion":"Check O1.","streamSeconds":12,"utc":"2026-05-04T09:00:12Z"}""";

        var line = MessagePrinter.Format("alert/room-1", Encoding.UTF8.GetBytes(body), includeStatus: false);

        Assert.NotNull(line);
        Assert.Contains("room-1: 150.02 Hz mains h3, aliased minor — raised, 2.7 µV RMS, 25% of channels (strongest: O1, O2)", line, StringComparison.Ordinal);
        Assert.Contains("hint: Check O1.", line, StringComparison.Ordinal);
    }

    [Fact]
    public void A_fault_clear_names_the_channel_from_its_key()
    {
        var body = """{"v":1,"stream":"room-1","key":"fault/T4/flat","kind":"fault","fault":"flat","reason":"subsided","durationSeconds":16,"peakSeverity":"marked","lastSeverity":"marked","streamSeconds":60,"utc":"2026-05-04T09:01:00Z"}""";

        var line = MessagePrinter.Format("clear/room-1", Encoding.UTF8.GetBytes(body), includeStatus: false);

        Assert.Contains("room-1: channel T4 flat cleared (subsided) after 16 s", line, StringComparison.Ordinal);
    }

    [Fact]
    public void Status_lines_appear_only_when_asked_for()
    {
        var body = Encoding.UTF8.GetBytes("""{"v":1,"stream":"room-1","utc":"2026-05-04T09:01:00Z","framesAnalysed":30,"linesPresent":2,"activeAlerts":1,"chunksAccepted":100,"chunksDropped":0,"chunksRejected":0,"lagSeconds":0.5}""");

        Assert.Null(MessagePrinter.Format("status/room-1", body, includeStatus: false));

        // Half a second is the usual wait for a chunk: no word about it.
        Assert.EndsWith("30 frames, 2 lines, 1 active alerts, 0 dropped", MessagePrinter.Format("status/room-1", body, includeStatus: true), StringComparison.Ordinal);
    }

    [Fact]
    public void A_live_stream_that_lags_says_by_how_much_and_a_replay_says_whose_time_it_shows()
    {
        var lagging = Status(utc: "2026-12-01T10:22:30Z", lagSeconds: 42.4);
        var replay = Status(utc: "2026-12-01T10:22:30Z", lagSeconds: 36618.4);
        var ahead = Status(utc: "2026-12-01T10:22:30Z", lagSeconds: -7200);

        Assert.EndsWith("0 dropped, 42 s behind real time", MessagePrinter.Format("status/r", lagging, includeStatus: true), StringComparison.Ordinal);

        // 10:22:30 − 36618.4 s (10 h 10 min 18.4 s) = 00:12:11.6 the same day.
        var line = MessagePrinter.Format("status/r", replay, includeStatus: true);
        Assert.EndsWith("0 dropped, replaying data from 2026-12-01 00:12 UTC", line, StringComparison.Ordinal);
        Assert.DoesNotContain("behind", line, StringComparison.Ordinal);

        // Data two hours ahead of the clock: 10:22:30 + 2 h.
        Assert.EndsWith("0 dropped, data dated 2026-12-01 12:22 UTC, ahead of this clock", MessagePrinter.Format("status/r", ahead, includeStatus: true), StringComparison.Ordinal);
    }

    private static byte[] Status(string utc, double lagSeconds) => Encoding.UTF8.GetBytes(
        $$"""{"v":1,"stream":"r","utc":"{{utc}}","framesAnalysed":30,"linesPresent":2,"activeAlerts":1,"chunksAccepted":100,"chunksDropped":0,"chunksRejected":0,"lagSeconds":{{lagSeconds.ToString(System.Globalization.CultureInfo.InvariantCulture)}}}""");

    [Fact]
    public void A_body_that_is_not_JSON_is_shown_rather_than_thrown()
    {
        var line = MessagePrinter.Format("alert/x", Encoding.UTF8.GetBytes("{oops"), includeStatus: false);

        Assert.Contains("not JSON", line, StringComparison.Ordinal);
    }
}
