using System.Text;
using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Core.Reporting;
using HumWatch.Host.Checking;
using HumWatch.Host.Publishing;
using HumWatch.Host.Tests.Publishing.Support;
using Xunit;

namespace HumWatch.Host.Tests.Checking;

/// <summary>What tools read: JSON with characters as themselves, numbers rounded the one documented way.</summary>
public sealed class ReportOutputTests
{
    [Fact]
    public void A_report_writes_plus_times_apostrophe_micro_and_dash_as_themselves()
    {
        var report = new CheckReport
        {
            File = "night's recording.edf",
            Verdict = Verdict.Fail,
            Format = "EDF+C",
            Notes = ["mains ×3 — 2.5 µV RMS"],
        };

        var json = JsonSerializer.Serialize(report, CheckReportJsonContext.Output.CheckReport);

        Assert.Contains("\"EDF+C\"", json, StringComparison.Ordinal);
        Assert.Contains("night's recording.edf", json, StringComparison.Ordinal);
        Assert.Contains("mains ×3 — 2.5 µV RMS", json, StringComparison.Ordinal);
        Assert.DoesNotContain("\\u", json, StringComparison.Ordinal);
        Assert.Equal("EDF+C", JsonSerializer.Deserialize(json, CheckReportJsonContext.Output.CheckReport)!.Format);
    }

    [Fact]
    public void JSON_still_escapes_what_JSON_requires()
    {
        // RFC 8259 section 7: quotation mark, reverse solidus and control characters must be escaped.
        var json = JsonSerializer.Serialize(new CheckReport { File = "a\"b\\c\nd", Verdict = Verdict.Pass }, CheckReportJsonContext.Output.CheckReport);

        Assert.Contains(@"""a\""b\\c\nd""", json, StringComparison.Ordinal);
    }

    [Fact]
    public void An_alert_body_writes_its_suggestion_and_labels_as_themselves()
    {
        var raised = Some.Raised() with { WorstChannels = ["EEG Fp1+A2"], Suggestion = "the monitor's cable — move it away" };

        var (_, body) = Messages.For(raised);
        var text = Encoding.UTF8.GetString(body);

        Assert.Contains("\"EEG Fp1+A2\"", text, StringComparison.Ordinal);
        Assert.Contains("the monitor's cable — move it away", text, StringComparison.Ordinal);
        Assert.DoesNotContain("\\u", text, StringComparison.Ordinal);
    }

    [Fact]
    public void Message_numbers_are_rounded_as_in_check_reports()
    {
        var raised = Some.Raised() with
        {
            FrequencyHz = 50.00506756423255,
            AmplitudeUvRms = 6.543219876,
            ChannelShare = 0.7368421052631579,
            StreamSeconds = 14.0039999999,
            FalseAlarmProbability = 2.5123456e-12,
        };

        var alert = JsonDocument.Parse(Messages.For(raised).Body).RootElement;
        var text = Encoding.UTF8.GetString(Messages.For(raised).Body);

        Assert.Equal(50.005, alert.GetProperty("frequencyHz").GetDouble());
        Assert.Equal(6.543, alert.GetProperty("amplitudeUvRms").GetDouble());
        Assert.Equal(0.737, alert.GetProperty("channelShare").GetDouble());
        Assert.Equal(14.004, alert.GetProperty("streamSeconds").GetDouble());
        Assert.Equal(2.51e-12, alert.GetProperty("falseAlarmProbability").GetDouble());
        Assert.DoesNotContain("50.00506", text, StringComparison.Ordinal);

        var cleared = Some.Cleared() with { FrequencyHz = 49.98765432, DurationSeconds = 30.04999, PeakAmplitudeUvRms = 22.22222 };
        var clear = JsonDocument.Parse(Messages.For(cleared).Body).RootElement;
        Assert.Equal(49.988, clear.GetProperty("frequencyHz").GetDouble());
        Assert.Equal(30.0, clear.GetProperty("durationSeconds").GetDouble());
        Assert.Equal(22.222, clear.GetProperty("peakAmplitudeUvRms").GetDouble());

        var status = JsonDocument.Parse(Messages.For(new StatusMessage(1, "room-a", Some.Utc, 10, 1, 0, 5, 0, 0, 0.43333333) { MainsHz = 50 })).RootElement;
        Assert.Equal(0.4, status.GetProperty("lagSeconds").GetDouble());
    }

    [Fact]
    public void A_fail_says_which_line_crossed_which_limit_and_the_report_lists_the_limits()
    {
        var limits = new CheckLimits { WarnLineUvRms = 2, FailLineUvRms = 8 };
        var findings = new RecordingFindings(
            500, 19, 60, 29, 50.01,
            [
                Line(50.01, 12.345, SomeSource(1)),
                Line(150.03, 3.2, SomeSource(3)),
            ],
            []);

        var decision = findings.Decide(limits, 60);

        Assert.Equal(Verdict.Fail, decision.Verdict);
        Assert.Equal(50.01, decision.Line!.FrequencyHz);
        Assert.Equal(Verdict.Warn, new RecordingFindings(500, 19, 60, 29, 50.01, [Line(150.03, 3.2, SomeSource(3))], []).Decide(limits, 60).Verdict);
    }

    private static LineFinding Line(double hz, double uvRms, Core.Attribution.SourceMatch source) =>
        new(hz, source, [], uvRms, uvRms * 1.1, 20, 1, 19, ["Cz"], 0, 60, 60);

    private static Core.Attribution.SourceMatch SomeSource(int harmonic) => Some.Mains(harmonic);
}
