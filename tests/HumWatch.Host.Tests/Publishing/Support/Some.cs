using HumWatch.Core.Alerts;
using HumWatch.Core.Attribution;
using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;

namespace HumWatch.Host.Tests.Publishing.Support;

/// <summary>Test data.</summary>
internal static class Some
{
    public static readonly DateTimeOffset Utc = new(2026, 3, 2, 9, 15, 30, TimeSpan.Zero);

    public static SourceMatch Mains(int harmonic = 1) => new(SourceKind.Mains, "mains", 50, harmonic, false, 50 * harmonic, 0);

    public static AlertRaised Raised(string stream = "room-a", DateTimeOffset? utc = null) => new(
        stream, FindingKey.Mains(1), AlertCategory.Line, Mains(), null, 14, utc ?? Utc, 0, (utc ?? Utc).AddSeconds(-14), 50.02, 6.5, 0.75,
        ["Cz", "Fp1"], "On most channels: check the ground and reference electrodes.", AlertSeverity.Marked, 2.5e-12);

    public static AlertSeverityChanged SeverityChanged(string stream = "room-a") => new(
        stream, FindingKey.Mains(1), AlertCategory.Line, Mains(), null, 20, Utc.AddSeconds(6), 50.01, 22, 0.75, ["Cz"], AlertSeverity.Marked, AlertSeverity.Severe, 4e-30);

    public static AlertCleared Cleared(string stream = "room-a") => new(
        stream, FindingKey.Mains(1), AlertCategory.Line, Mains(), null, 40, Utc.AddSeconds(26), 50.0, AlertClearReason.Subsided, 30, 22, AlertSeverity.Severe, AlertSeverity.Minor);

    public static MinuteRow Row(string session, long sequence, double monitoredSeconds, double affectedSeconds, double maxUvRms, double medianUvRms, FindingKey? key = null, string stream = "room-a", double mainsHz = 50.01) =>
        new(stream, session, sequence, new DateTimeOffset(2026, 3, 2, 9, 15, 0, TimeSpan.Zero), key ?? FindingKey.Mains(1), monitoredSeconds, affectedSeconds, maxUvRms, medianUvRms, ["Cz"], mainsHz);
}
