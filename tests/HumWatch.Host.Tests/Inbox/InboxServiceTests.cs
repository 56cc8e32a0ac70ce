using System.Security.Cryptography;
using System.Text;
using HumWatch.Core.Alerts;
using HumWatch.Core.Ledger;
using HumWatch.Core.Reporting;
using HumWatch.Core.Signals;
using HumWatch.Formats;
using HumWatch.Formats.Edf;
using HumWatch.Host.Configuration;
using HumWatch.Host.Inbox;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.EndToEnd;
using HumWatch.Host.Tests.Ingest.Support;
using HumWatch.Host.Tests.Monitoring;
using HumWatch.Host.Tests.Publishing.Support;
using HumWatch.Simulation;
using Microsoft.Extensions.Options;
using Microsoft.Extensions.Time.Testing;
using Xunit;

namespace HumWatch.Host.Tests.Inbox;

public sealed class InboxServiceTests : IDisposable
{
    // ServiceEndToEndTests.WriteRecording stamps files 2026-05-04 11:00 local; the site's zone here is UTC.
    private static readonly DateTimeOffset RecordingStartUtc = new(2026, 5, 4, 11, 0, 0, TimeSpan.Zero);

    private readonly TempFolder _temp = new();

    public void Dispose() => _temp.Dispose();

    private string Inbox => _temp.File("inbox");

    private string Archive => _temp.File("archive");

    [Fact]
    public async Task A_dropped_file_and_the_same_samples_streamed_live_give_the_same_alerts_minute_rows_and_spectra()
    {
        using var store = OpenStore();
        using var filed = new SessionHarness();
        var inbox = NewInbox(store, filed);
        var dropped = Path.Combine(Inbox, "ward-2", "visit.edf");
        Directory.CreateDirectory(Path.GetDirectoryName(dropped)!);
        ServiceEndToEndTests.WriteRecording(dropped, Rooms.WithMains("ward-2", onSeconds: 0, offSeconds: null), seconds: 150);
        var sha256 = Sha256Of(dropped);

        Assert.Equal(1, inbox.ScanOnce());

        // The same samples, as the reader decodes them from the archived copy, streamed live with their UTC times.
        using var live = new SessionHarness();
        var archived = Path.Combine(Archive, "ward-2", "visit.edf");
        Assert.True(File.Exists(archived));
        var monitor = live.Monitor("ward-2");
        SessionHarness.Feed(monitor, Timed(archived, RecordingStartUtc));
        await monitor.DisposeAsync();
        live.Writer.Flush();

        // Filed rows reached the store with the file: the inbox writes them before it completes the journal entry.
        Assert.Equal(0, filed.Writer.PendingCount);
        Assert.Equal(live.Outputs.Alerts.Select(SessionHarness.Describe), filed.Outputs.Alerts.Select(SessionHarness.Describe));
        Assert.Equal(live.Outputs.StoredRows.Select(SessionHarness.Describe), filed.Outputs.StoredRows.Select(SessionHarness.Describe));
        Assert.Equal(live.Outputs.Spectra.Select(SessionHarness.Describe), filed.Outputs.Spectra.Select(SessionHarness.Describe));

        // And they are not trivially equal: a mains alert raised and cleared at the file's end, 150 s over three minutes.
        Assert.Contains(filed.Outputs.Alerts.OfType<AlertRaised>(), r => r.Source.Kind == Core.Attribution.SourceKind.Mains);
        Assert.Contains(filed.Outputs.Alerts.OfType<AlertCleared>(), c => c.Reason == AlertClearReason.StreamEnded);
        var minutes = filed.Outputs.StoredRows.Where(r => r.SourceKey == MinuteLedger.AllSourcesKey).ToList();
        Assert.Equal([RecordingStartUtc, RecordingStartUtc.AddMinutes(1), RecordingStartUtc.AddMinutes(2)], minutes.Select(r => r.MinuteUtc));
        Assert.Equal(150, minutes.Sum(r => r.MonitoredSeconds), 9); // 150 one-second records, no gap
        Assert.All(filed.Outputs.StoredRows, r => Assert.Equal($"file:{sha256}:0", r.SessionId));
        Assert.Equal(FileJournalState.Archived, store.Files.Find(sha256, new FileInfo(archived).Length)?.State);
    }

    [Fact]
    public void The_report_the_alerts_and_the_ledger_of_a_dropped_file_name_the_same_sources()
    {
        // A wandering 60 Hz grid (a grid wanders; no MainsHz configured) with its 3rd harmonic, and a crystal-steady
        // 120 Hz monitor on the posterior channels: one tracker decides for all three outputs, so they must agree.
        var room = new RoomSimulator(
            new SimulatedRoom
            {
                Name = "oak-room",
                SampleRateHz = 500,
                Channels = SimulatedRoom.Montage(19),
                Tones =
                [
                    new SimulatedTone { Name = "mains", FrequencyHz = 60, AmplitudeUvRms = 6, HarmonicAmplitudes = [0, 0.5], WanderHz = 0.05 },
                    new SimulatedTone { Name = "monitor", FrequencyHz = 120, AmplitudeUvRms = 3, Channels = ["P3", "Pz", "P4", "O1", "O2"] },
                ],
            },
            seed: 31);
        using var store = OpenStore();
        using var sessions = new SessionHarness();
        var inbox = NewInbox(store, sessions);
        var dropped = Path.Combine(Inbox, "oak-room", "night.edf");
        Directory.CreateDirectory(Path.GetDirectoryName(dropped)!);
        ServiceEndToEndTests.WriteRecording(dropped, room, seconds: 150);

        Assert.Equal(1, inbox.ScanOnce());

        var reportPath = Path.Combine(Archive, "oak-room", "night.edf.report.json");
        using var report = System.Text.Json.JsonDocument.Parse(File.ReadAllText(reportPath));
        var reported = report.RootElement.GetProperty("lines").EnumerateArray()
            .Select(l => $"{l.GetProperty("source").GetString()}:{l.GetProperty("fundamentalHz").GetDouble():0}:{l.GetProperty("harmonic").GetInt32()}")
            .ToHashSet();
        Assert.Equal(["display:120:1", "mains:60:1", "mains:60:3"], reported.Order());

        var ledger = sessions.Outputs.StoredRows
            .Where(r => r.SourceKey.Category is Core.Findings.FindingCategory.Mains or Core.Findings.FindingCategory.Display)
            .Select(r => r.SourceKey.ToString())
            .ToHashSet();
        var alerts = sessions.Outputs.Alerts.OfType<AlertRaised>()
            .Where(r => r.Category == AlertCategory.Line)
            .Select(r => r.Key.ToString())
            .ToHashSet();
        Assert.Equal(["display 120 Hz/h1", "mains/h1", "mains/h3"], ledger.Order());
        Assert.Equal(ledger.Order(), alerts.Order());
    }

    [Fact]
    public void The_same_content_dropped_again_after_a_restart_is_moved_aside_without_a_second_set_of_alerts_or_rows()
    {
        using var store = OpenStore();
        using var outputs = new SessionHarness();
        var source = _temp.File("source.edf");
        ServiceEndToEndTests.WriteRecording(source, Rooms.WithMains("bay-1", onSeconds: 0, offSeconds: null), seconds: 70);
        Directory.CreateDirectory(Inbox);
        File.Copy(source, Path.Combine(Inbox, "bay-1.edf"));
        Assert.Equal(1, NewInbox(store, outputs).ScanOnce());
        var alerts = outputs.Outputs.Alerts.Count;
        var rows = outputs.Outputs.StoredRows.Count;
        var spectra = outputs.Outputs.Spectra.Count;
        Assert.True(alerts > 0 && rows > 0 && spectra > 0);

        // A new service instance on the same store, as after a restart.
        File.Copy(source, Path.Combine(Inbox, "bay-1.edf"));
        Assert.Equal(1, NewInbox(store, outputs).ScanOnce());

        Assert.Equal(alerts, outputs.Outputs.Alerts.Count);
        Assert.Equal(rows, outputs.Outputs.StoredRows.Count);
        Assert.Equal(spectra, outputs.Outputs.Spectra.Count);
        Assert.Equal(2, Directory.GetFiles(Path.Combine(Archive, "bay-1"), "bay-1*.edf").Length);
        Assert.Single(Directory.GetFiles(Path.Combine(Archive, "bay-1"), "*.report.json"));
        Assert.Empty(Directory.GetFiles(Inbox, "*", SearchOption.AllDirectories));
    }

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void A_file_checked_again_after_an_interrupted_attempt_stores_and_publishes_no_alert_event_twice(bool closedAtRestart)
    {
        var source = _temp.File("source.edf");
        ServiceEndToEndTests.WriteRecording(source, Rooms.WithMains("bay-2", onSeconds: 0, offSeconds: null), seconds: 90);
        var dropped = Path.Combine(Inbox, "bay-2.edf");
        Directory.CreateDirectory(Inbox);

        // What a whole attempt emits, from a store of its own.
        List<AlertEvent> complete;
        using (var scratch = new HumWatchStore(new StoreOptions { Path = _temp.File("scratch.db") }, new FakeTimeProvider(RecordingStartUtc)))
        using (var outputs = new SessionHarness())
        {
            File.Copy(source, dropped);
            Assert.Equal(1, NewInbox(scratch, outputs).ScanOnce());
            complete = [.. outputs.Outputs.Alerts];
        }

        var first = complete[0];
        Assert.IsType<AlertRaised>(first);
        Assert.Contains(complete, e => e is AlertCleared { Reason: AlertClearReason.StreamEnded } && e.Key == first.Key);

        // The interrupted attempt: the file claimed, its first event stored, then the process died.
        File.Copy(source, dropped);
        var file = new FileInfo(dropped);
        using (var killed = OpenStore())
        {
            Assert.True(killed.Files.TryBegin(file.FullName, file.Length, file.LastWriteTimeUtc, Sha256Of(dropped), out _));
            killed.Alerts.AppendAlert(first);
        }

        using var store = OpenStore();
        using var sessions = new SessionHarness();
        var publisher = new RecordingPublisher();
        if (closedAtRestart)
        {
            var closer = new UnclosedAlertCloser(store, new AlertDispatcher(store.Alerts, publisher, new RecordingLogger<AlertDispatcher>()), sessions.Time, new RecordingLogger<UnclosedAlertCloser>());
            Assert.Equal(1, closer.CloseAll());
        }

        var logger = new RecordingLogger<InboxService>();
        Assert.Equal(1, NewInbox(store, sessions, StoringFactory(store, sessions, publisher), logger).ScanOnce());

        var stored = store.Alerts.Between(RecordingStartUtc.AddDays(-1), RecordingStartUtc.AddDays(1));
        Assert.Equal(stored.Count, stored.Select(a => (a.Stream, a.Key, a.Event, a.Utc)).Distinct().Count());
        var firstAlert = stored.Where(a => a.Key == first.Key).ToList();
        var others = complete.Where(e => e.Key != first.Key).ToList();
        Assert.Equal(others.Count, stored.Count(a => a.Key != first.Key));
        int skipped;
        if (closedAtRestart)
        {
            // The restart's clear is the alert's record; the second check adds nothing to it.
            Assert.Equal([AlertEventKind.Raised, AlertEventKind.Cleared], firstAlert.Select(a => a.Event));
            Assert.Equal(AlertClearReason.ServiceRestarted, firstAlert[1].Reason);
            skipped = complete.Count(e => e.Key == first.Key);
            Assert.Equal(1 + others.Count, publisher.Published.Count); // the restart's clear, then the other alerts
        }
        else
        {
            Assert.Equal(complete.Where(e => e.Key == first.Key).Select(e => e.EventKind), firstAlert.Select(a => a.Event));
            skipped = 1;
            Assert.Equal(complete.Count - 1, publisher.Published.Count); // all but the stored raise
        }

        var entry = Assert.Single(logger.Entries, e => e.EventId.Id == 4007);
        Assert.Contains($"{skipped} alert event(s)", entry.Message, StringComparison.Ordinal);
        Assert.Equal(FileJournalState.Archived, store.Files.Find(Sha256Of(Path.Combine(Archive, "bay-2", "bay-2.edf")), file.Length)?.State);
    }

    [Fact]
    public void Each_rate_of_a_multi_rate_file_is_its_own_stream_with_its_own_session()
    {
        using var store = OpenStore();
        using var outputs = new SessionHarness();
        var dropped = Path.Combine(Inbox, "lab-9", "mixed.edf");
        Directory.CreateDirectory(Path.GetDirectoryName(dropped)!);
        WriteTwoRates(dropped, seconds: 70);
        var sha256 = Sha256Of(dropped);

        Assert.Equal(1, NewInbox(store, outputs).ScanOnce());

        Assert.Equal(
            [("lab-9", $"file:{sha256}:0"), ("lab-9.500hz", $"file:{sha256}:1")],
            outputs.Outputs.StoredRows.Select(r => (r.StreamId, r.SessionId)).Distinct().Order());

        // Both groups carry the simulated mains tone, so each stream raises its own mains alert.
        Assert.Contains(outputs.Outputs.Alerts.OfType<AlertRaised>(), r => r.StreamId == "lab-9" && r.Source.Kind == Core.Attribution.SourceKind.Mains);
        Assert.Contains(outputs.Outputs.Alerts.OfType<AlertRaised>(), r => r.StreamId == "lab-9.500hz" && r.Source.Kind == Core.Attribution.SourceKind.Mains);
    }

    [Fact]
    public async Task Archived_reports_and_reasons_are_UTF8_without_a_byte_order_mark_and_load_in_python()
    {
        using var store = OpenStore();
        using var sessions = new SessionHarness();
        var inbox = NewInbox(store, sessions);
        var dropped = Path.Combine(Inbox, "ward-5", "visit.edf");
        Directory.CreateDirectory(Path.GetDirectoryName(dropped)!);
        ServiceEndToEndTests.WriteRecording(dropped, Rooms.WithMains("ward-5", onSeconds: 0, offSeconds: null), seconds: 30);
        File.WriteAllText(Path.Combine(Inbox, "ward-5", "broken.edf"), "not an EDF header");

        Assert.Equal(2, inbox.ScanOnce());

        // RFC 8259 section 8.1: JSON text must not begin with a byte-order mark; Python's json module refuses one.
        var reportPath = Path.Combine(Archive, "ward-5", "visit.edf.report.json");
        var report = File.ReadAllBytes(reportPath);
        Assert.Equal((byte)'{', report[0]);
        Assert.Contains("\"EDF+C\"", Encoding.UTF8.GetString(report), StringComparison.Ordinal);
        var reason = Assert.Single(Directory.GetFiles(_temp.File("rejected"), "*.reason.txt"));
        Assert.NotEqual(0xEF, File.ReadAllBytes(reason)[0]);

        if (File.Exists(PythonPeer.Python))
        {
            // Debian's python3 json.load, as a lab's script would read the report.
            var info = new System.Diagnostics.ProcessStartInfo(PythonPeer.Python) { RedirectStandardOutput = true, RedirectStandardError = true };
            info.ArgumentList.Add("-c");
            info.ArgumentList.Add("import json, sys; r = json.load(open(sys.argv[1], encoding='utf-8')); print(r['format'], r['verdict'])");
            info.ArgumentList.Add(reportPath);
            using var python = System.Diagnostics.Process.Start(info)!;
            var output = await python.StandardOutput.ReadToEndAsync();
            var error = await python.StandardError.ReadToEndAsync();
            await python.WaitForExitAsync();
            Assert.True(python.ExitCode == 0, error);
            Assert.StartsWith("EDF+C ", output, StringComparison.Ordinal);
        }
    }

    private HumWatchStore OpenStore() => new(new StoreOptions { Path = _temp.File("inbox.db") }, new FakeTimeProvider(RecordingStartUtc));

    private InboxService NewInbox(HumWatchStore store, SessionHarness sessions, StreamSessionFactory? factory = null, RecordingLogger<InboxService>? logger = null) => new(
        Options.Create(new InboxOptions { Folder = Inbox, ArchiveFolder = Archive, RejectedFolder = _temp.File("rejected"), StableSeconds = 0 }),
        Options.Create(new CheckLimits()),
        Options.Create(new SiteOptions { TimeZone = "UTC" }),
        store,
        factory ?? sessions.Factory,
        sessions.Writer,
        logger ?? new RecordingLogger<InboxService>());

    /// <summary>Sessions whose alert events go through the service's dispatcher into <paramref name="store"/> and <paramref name="publisher"/>.</summary>
    private static StreamSessionFactory StoringFactory(HumWatchStore store, SessionHarness sessions, RecordingPublisher publisher) => new(
        new Core.Analysis.AnalysisOptions(),
        Options.Create(new AlertOptions()),
        Options.Create(new MonitorOptions()),
        new AlertDispatcher(store.Alerts, publisher, new RecordingLogger<AlertDispatcher>()),
        sessions.Writer,
        sessions.Time);

    /// <summary>The file's chunks as its reader yields them, each stamped with the UTC time of its first sample.</summary>
    private static IEnumerable<SampleChunk> Timed(string path, DateTimeOffset startUtc)
    {
        using var reader = RecordingReader.Open(path);
        Assert.Single(reader.Info.Groups);
        foreach (var item in reader.ReadChunks())
        {
            var chunk = item.Chunk;
            var utc = startUtc.AddTicks((long)Math.Round(chunk.FirstSampleIndex / chunk.Layout.SampleRateHz * TimeSpan.TicksPerSecond));
            yield return chunk.At(chunk.FirstSampleIndex, utc);
        }
    }

    private static void WriteTwoRates(string path, int seconds)
    {
        var slow = Rooms.WithMains("lab-9", onSeconds: 0, offSeconds: null);
        var fastRoom = new SimulatedRoom
        {
            Name = "lab-9-fast",
            SampleRateHz = 500,
            Channels = [new SimulatedChannel { Label = "X1" }, new SimulatedChannel { Label = "X2" }],
            Tones = [new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = 8 }],
        };
        var fast = new RoomSimulator(fastRoom, seed: 3, Rooms.Start);
        var slowPerRecord = (int)slow.Layout.SampleRateHz;
        var fastPerRecord = (int)fast.Layout.SampleRateHz;
        var options = new EdfWriterOptions
        {
            Kind = EdfFileKind.EdfPlusC,
            StartLocal = new DateTime(2026, 5, 4, 11, 0, 0, DateTimeKind.Unspecified),
            Signals =
            [
                .. slow.Layout.Channels.Select(c => EdfWriterSignal.Edf16(c.Label, slowPerRecord)),
                .. fast.Layout.Channels.Select(c => EdfWriterSignal.Edf16(c.Label, fastPerRecord)),
            ],
        };
        var record = new float[(slowPerRecord * slow.Layout.ChannelCount) + (fastPerRecord * fast.Layout.ChannelCount)];
        using var writer = new EdfWriter(path, options);
        for (var r = 0; r < seconds; r++)
        {
            // A record holds each signal's samples in turn: channel-major, as the simulator makes them.
            var slowPart = slowPerRecord * slow.Layout.ChannelCount;
            slow.Next(slowPerRecord).SamplesUv[..slowPart].CopyTo(record);
            fast.Next(fastPerRecord).SamplesUv.CopyTo(record.AsSpan(slowPart));
            writer.WriteRecord(record);
        }
    }

    private static string Sha256Of(string path) => Convert.ToHexStringLower(SHA256.HashData(File.ReadAllBytes(path)));
}
