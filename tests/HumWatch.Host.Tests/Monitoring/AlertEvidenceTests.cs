using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Core.Attribution;
using HumWatch.Host.Publishing;
using HumWatch.Host.Tests.EndToEnd;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Host.Tests.Monitoring;

/// <summary>
/// The service names a live line by the same evidence `check` uses, and its alert body carries it. A 60 Hz grid that
/// wanders (grids do; a display's crystal does not) with a steady 120 Hz monitor on the posterior channels: the 120 Hz
/// alert is a display, not mains ×2.
/// </summary>
public sealed class AlertEvidenceTests
{
    [Fact]
    public void A_live_120_Hz_monitor_in_a_60_Hz_lab_raises_a_display_alert_whose_body_carries_the_frequency_track_evidence()
    {
        using var harness = new SessionHarness();
        var room = new SimulatedRoom
        {
            Name = "north-room",
            SampleRateHz = 500,
            Channels = SimulatedRoom.Montage(19),
            Tones =
            [
                new SimulatedTone { Name = "mains", FrequencyHz = 60, AmplitudeUvRms = 6, HarmonicAmplitudes = [0, 0.4], WanderHz = 0.05 },
                new SimulatedTone { Name = "monitor", FrequencyHz = 120, AmplitudeUvRms = 3, Channels = ["P3", "Pz", "P4", "O1", "O2"] },
            ],
        };
        var monitor = harness.Monitor("north-room");

        SessionHarness.Feed(monitor, SessionHarness.Chunks(new RoomSimulator(room, seed: 23, startUtc: Rooms.Start), 150));

        var raises = harness.Outputs.Alerts.OfType<AlertRaised>().Where(r => r.Category == AlertCategory.Line).ToList();
        Assert.Contains(raises, r => r.Source.Kind == SourceKind.Mains && r.Source.Harmonic == 1);
        var display = Assert.Single(raises, r => r.Source.Kind == SourceKind.Display && Math.Abs(r.FrequencyHz - 120) < 0.3);
        var (_, body) = Messages.For(display);
        using var json = JsonDocument.Parse(body);
        // At the raise (third frame) the frequency track is still short; the channel pattern already speaks.
        var evidence = json.RootElement.GetProperty("evidence");
        Assert.Contains(evidence.GetProperty("basis").GetString(), new[] { "channel-pattern", "frequency-track" });
        Assert.Contains(evidence.GetProperty("gridLock").GetString(), new[] { "channels-differ", "independent" });

        // The store keeps it beside the alert.
        using var temp = new TempFolder();
        using (var store = new HumWatch.Host.Store.HumWatchStore(new HumWatch.Host.Store.StoreOptions { Path = Path.Combine(temp.Path, "store.db") }, harness.Time))
        {
            store.Alerts.AppendAlert(display);
            var stored = Assert.Single(store.Alerts.Between(display.Utc.AddMinutes(-1), display.Utc.AddMinutes(1)));
            using var storedEvidence = JsonDocument.Parse(stored.EvidenceJson!);
            Assert.Equal(evidence.GetProperty("gridLock").GetString(), storedEvidence.RootElement.GetProperty("gridLock").GetString());
        }

        // Whatever was raised at 120 Hz before the evidence came in must not still be open as mains ×2.
        var open = raises.Where(r => r.Source.Kind == SourceKind.Mains && r.Source.Harmonic == 2)
            .Where(r => !harness.Outputs.Alerts.OfType<AlertCleared>().Any(c => c.Key == r.Key && c.Utc >= r.Utc));
        Assert.Empty(open);
    }
}
