using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Findings;
using HumWatch.Core.Reporting;
using HumWatch.Host.Publishing;
using HumWatch.Host.Tests.Publishing.Support;
using Xunit;

namespace HumWatch.Host.Tests.Publishing;

/// <summary>An alert body that carries a hint carries the caution reports carry, in its own field.</summary>
public sealed class AlertCautionTests
{
    [Fact]
    public void A_raise_with_a_suggestion_carries_the_reports_caution()
    {
        var json = JsonDocument.Parse(Messages.For(Some.Raised()).Body).RootElement;

        Assert.False(string.IsNullOrEmpty(json.GetProperty("suggestion").GetString()));
        Assert.Equal(SafetyNotice.Text, json.GetProperty("caution").GetString());
        Assert.Contains("not a medical device", SafetyNotice.Text, StringComparison.Ordinal);
        Assert.Contains("qualified staff", SafetyNotice.Text, StringComparison.Ordinal);
    }

    [Fact]
    public void A_fault_raise_carries_it_too_and_a_severity_change_without_a_hint_does_not()
    {
        var fault = new AlertRaised("room-a", FindingKey.ChannelFault("Cz", ChannelFaultKind.Flat), AlertCategory.ChannelFault, SourceMatch.None, ChannelFaultKind.Flat,
            12, Some.Utc, 4, Some.Utc.AddSeconds(-8), double.NaN, double.NaN, 0.25, ["Cz"], Suggestions.ForFault(ChannelFaultKind.Flat, "Cz"), AlertSeverity.Marked);

        Assert.Equal(SafetyNotice.Text, JsonDocument.Parse(Messages.For(fault).Body).RootElement.GetProperty("caution").GetString());

        var change = JsonDocument.Parse(Messages.For(Some.SeverityChanged()).Body).RootElement;
        Assert.Equal(JsonValueKind.Null, change.GetProperty("suggestion").ValueKind);
        Assert.Equal(JsonValueKind.Null, change.GetProperty("caution").ValueKind);
    }
}
