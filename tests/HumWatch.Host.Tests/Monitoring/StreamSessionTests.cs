using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Ledger;
using HumWatch.Core.Reporting;
using HumWatch.Formats;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.EndToEnd;
using Xunit;

namespace HumWatch.Host.Tests.Monitoring;

public sealed class StreamSessionTests
{
    [Fact]
    public async Task Minute_rows_go_from_the_session_to_the_ledger_writer_and_the_store_without_the_monitor_handing_them_on()
    {
        using var harness = new SessionHarness();
        await harness.Writer.StartAsync(CancellationToken.None);
        await using var monitor = harness.Monitor("room-m");

        // 70 s from 09:00:00: the first frame reaching into 09:01 completes the minute 09:00.
        SessionHarness.Feed(monitor, SessionHarness.Chunks(Rooms.WithMains("room-m", onSeconds: 0, offSeconds: null), seconds: 70));

        Assert.True(monitor.IsOpen);
        Assert.Empty(harness.Outputs.StoredRows); // the writer writes on its own clock, not when a chunk is analysed
        Assert.NotEqual(0, harness.Writer.PendingCount);

        harness.Time.Advance(LedgerWriter.DefaultWriteInterval);

        Assert.Equal(0, harness.Writer.PendingCount);
        var rows = harness.Outputs.StoredRows;
        Assert.All(rows, r => Assert.Equal(Rooms.Start, r.MinuteUtc));
        Assert.All(rows, r => Assert.Equal($"room-m@{Rooms.Start.UtcTicks}", r.SessionId));
        var all = Assert.Single(rows, r => r.SourceKey == MinuteLedger.AllSourcesKey);

        // The chunks carry their UTC times from 09:00:00 and the stream has no gap, so the whole minute was monitored.
        Assert.Equal(60, all.MonitoredSeconds, 9);
        Assert.InRange(all.AffectedSeconds, 1, 60);
        Assert.InRange(all.MedianAmplitudeUvRms, 8 * 0.85, 8 * 1.15); // the simulated mains tone is 8 µV RMS on every channel
    }

    [Fact]
    public async Task Rows_the_store_refused_are_written_by_a_later_retry_even_when_no_new_row_comes()
    {
        using var harness = new SessionHarness();
        await harness.Writer.StartAsync(CancellationToken.None);
        await harness.Health.StartAsync(CancellationToken.None);
        await using var monitor = harness.Monitor("room-r");
        SessionHarness.Feed(monitor, SessionHarness.Chunks(Rooms.WithMains("room-r", onSeconds: 0, offSeconds: null), seconds: 70));
        var waiting = harness.Writer.PendingCount;
        harness.Outputs.WritesToRefuse = 1;

        harness.Time.Advance(LedgerWriter.DefaultWriteInterval);

        Assert.Equal(1, harness.Outputs.WriteCalls);
        Assert.Empty(harness.Outputs.StoredRows);
        Assert.Equal(waiting, harness.Writer.PendingCount);
        Assert.Contains(harness.WriterLogger.Entries, e => e.EventId.Id == 1340);
        Assert.True(harness.Health.IsFaulted);

        // No chunk and no row in between: the store health retries after its first wait (1 s); the periodic write pauses.
        harness.Time.Advance(LedgerWriter.DefaultWriteInterval);

        Assert.Equal(2, harness.Outputs.WriteCalls);
        Assert.Equal(waiting, harness.Outputs.StoredRows.Count);
        Assert.Equal(0, harness.Writer.PendingCount);
        Assert.Contains(harness.WriterLogger.Entries, e => e.EventId.Id == 1342);
        Assert.False(harness.Health.IsFaulted);

        harness.Time.Advance(LedgerWriter.DefaultWriteInterval * 5);
        Assert.Equal(2, harness.Outputs.WriteCalls); // nothing waits, so nothing is written twice
    }

    [Fact]
    public async Task Rows_still_waiting_when_the_writer_stops_are_written_at_its_stop()
    {
        using var harness = new SessionHarness();
        await harness.Writer.StartAsync(CancellationToken.None);
        var monitor = harness.Monitor("room-s");
        SessionHarness.Feed(monitor, SessionHarness.Chunks(Rooms.WithMains("room-s", onSeconds: 0, offSeconds: null), seconds: 30));
        Assert.Equal(0, harness.Writer.PendingCount); // within the first minute nothing is complete yet

        // The service stops the monitors (which end their sessions, closing the open minute) before the writer.
        await monitor.DisposeAsync();
        Assert.NotEqual(0, harness.Writer.PendingCount);
        await harness.Writer.StopAsync(CancellationToken.None);

        var all = Assert.Single(harness.Outputs.StoredRows, r => r.SourceKey == MinuteLedger.AllSourcesKey);
        Assert.Equal(30, all.MonitoredSeconds, 9); // 30 s of samples at 250 Hz, all inside 09:00
        Assert.Equal(0, harness.Writer.PendingCount);
    }

    [Fact]
    public void Ending_a_session_clears_its_alerts_and_closes_its_minute_once()
    {
        using var harness = new SessionHarness();
        var room = Rooms.WithMains("room-e", onSeconds: 0, offSeconds: null);
        var session = harness.Factory.CreateLive("room-e", room.Layout);
        var analyzer = new StreamAnalyzer(room.Layout, harness.Factory.Analysis);
        foreach (var chunk in SessionHarness.Chunks(room, seconds: 30))
        {
            analyzer.Append(chunk, session);
        }

        Assert.Contains(harness.Outputs.Alerts.OfType<AlertRaised>(), r => r.Source.Kind == Core.Attribution.SourceKind.Mains);
        var active = session.ActiveAlertCount;
        Assert.True(active > 0);
        var before = harness.Outputs.Alerts.Count;

        session.End();
        session.End();

        var cleared = harness.Outputs.Alerts.Skip(before).ToList();
        Assert.Equal(active, cleared.Count);
        Assert.All(cleared, c => Assert.Equal(AlertClearReason.StreamEnded, Assert.IsType<AlertCleared>(c).Reason));
        Assert.All(cleared, c => Assert.Equal(30, c.StreamSeconds, 9)); // the last frame ends with the last sample
        Assert.Equal(0, session.ActiveAlertCount);
        harness.Writer.Flush();
        Assert.Single(harness.Outputs.StoredRows, r => r.SourceKey == MinuteLedger.AllSourcesKey);
        Assert.Single(harness.Outputs.Spectra); // one hour part, emitted once
    }

    [Fact]
    public void A_file_session_hands_every_frame_to_the_report_and_names_each_rate_group_and_its_session()
    {
        using var harness = new SessionHarness();
        var room = Rooms.WithMains("lab", onSeconds: 0, offSeconds: null);
        var analysis = harness.Factory.Analysis;
        var report = new RecordingAccumulator(analysis.Spectra.HopSeconds, analysis.Spectra.SpanSeconds);
        var first = harness.Factory.CreateForFileGroup("lab", "ab12", new SignalGroup(0, room.Layout, [0]), Rooms.Start, report);
        var second = harness.Factory.CreateForFileGroup("lab", "ab12", new SignalGroup(1, FastLayout(), [1]), Rooms.Start, report: null);

        var analyzer = new StreamAnalyzer(room.Layout, analysis);
        foreach (var chunk in SessionHarness.Chunks(room, seconds: 20))
        {
            analyzer.Append(chunk, first);
        }

        Assert.Equal(("lab", "file:ab12:0"), (first.StreamId, first.SessionId));
        Assert.Equal(("lab.500hz", "file:ab12:1"), (second.StreamId, second.SessionId));
        Assert.True(first.FramesAnalysed > 0);
        Assert.Equal(first.FramesAnalysed, report.Complete(room.Layout).FrameCount);
    }

    private static Core.Signals.StreamLayout FastLayout() =>
        new Simulation.RoomSimulator(new Simulation.SimulatedRoom { SampleRateHz = 500, Channels = Simulation.SimulatedRoom.Montage(2) }, seed: 1).Layout;
}
