using System.Diagnostics;
using System.Globalization;
using HumWatch.Simulation;
using HumWatch.TestSupport;
using Npgsql;
using Xunit;
using Xunit.Abstractions;
using Xunit.Sdk;

namespace HumWatch.KillHarness;

/// <summary>
/// Two real `humwatch run` processes, "lab-east" and "lab-west", on one PostgreSQL database (docs/store.md, *Several
/// instances on one store* and *Exactly once across the fleet*): rooms streamed to both, one file dropped into both
/// inboxes, one instance killed with an alert open, and the day's summaries rendered once and equal from either.
/// </summary>
public sealed class TwoInstancesTests(ITestOutputHelper output) : IDisposable
{
    private const string MainsRoom = "east-1";
    private const string DisplayRoom = "west-2";
    private const string SharedFile = "shared-night.edf";
    private const string SharedStream = "shared-night";
    private const int StreamSeconds = 150;

    /// <summary>Stream time per wall time while the rooms are played.</summary>
    private const double Speed = 5;

    private static readonly string[] EastRooms = ["east-1", "east-2"];
    private static readonly string[] WestRooms = ["west-1", "west-2"];

    private readonly List<string> _timings = [];
    private readonly Stopwatch _watch = Stopwatch.StartNew();
    private FleetInstance? _east;
    private FleetInstance? _west;
    private int _step;

    [PostgresFact]
    public async Task Two_instances_share_one_PostgreSQL_store_a_file_once_a_dead_peers_alert_and_one_day_summary()
    {
        using var server = new PostgresServer();
        var work = Directory.CreateTempSubdirectory("humwatch-fleet-").FullName;
        using var timeout = new CancellationTokenSource(TimeSpan.FromMinutes(5));
        var cancel = timeout.Token;
        var connectionString = server.CreateDatabase();

        // The credentials as docs/store.md tells operators to keep them: a file readable by the service only.
        var connectionFile = Path.Combine(work, "store-connection");
        var mode0600 = new FileStreamOptions { Mode = FileMode.CreateNew, Access = FileAccess.Write };
        if (!OperatingSystem.IsWindows())
        {
            mode0600.UnixCreateMode = UnixFileMode.UserRead | UnixFileMode.UserWrite;
        }

        using (var writer = new StreamWriter(connectionFile, mode0600))
        {
            writer.Write(connectionString);
        }

        string[] fleet =
        [
            "Instance:HeartbeatSeconds=1",
            "Instance:StaleAfterSeconds=4",
            "Site:TimeZone=UTC",
            "Summaries:Enabled=true",
            "Summaries:CatchUpDays=3",
            // The mains alert must stay open after its room's last chunk until the kill, not close as "stream ended".
            "Monitor:IdleCloseSeconds=600",
        ];
        var east = _east = new FleetInstance("lab-east", work, connectionFile, fleet);
        var west = _west = new FleetInstance("lab-west", work, connectionFile, fleet);
        await using var db = new NpgsqlConnection(connectionString);

        // The rooms' day: about 30 h ago (UTC), so it is over when the summaries are made; started on a whole minute and
        // not after 22:00, so the rooms and the file stay inside it.
        var start = DateTimeOffset.UtcNow.AddHours(-30);
        start = new DateTimeOffset(start.Year, start.Month, start.Day, Math.Min(start.Hour, 22), start.Minute, 0, TimeSpan.Zero);
        var day = DateOnly.FromDateTime(start.UtcDateTime);
        var dayText = day.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture);
        output.WriteLine($"work folder {work}; rooms from {start:O} (day {dayText})");

        // Step 1: both instances up, two rooms streamed to each over its own ingest socket; the file into both inboxes.
        Step(1, "rooms streamed to both");
        await Task.WhenAll(east.StartAsync(cancel), west.StartAsync(cancel));
        await db.OpenAsync(cancel);
        var sharedPath = Path.Combine(work, SharedFile);
        RecordingFile.Write(FileRoom(), sharedPath, seconds: 300, start.UtcDateTime.AddMinutes(5));
        var streaming = Task.WhenAll(
            Task.Run(() => StreamAsync(east.IngestPort, [Room("east-1", ("mains", 50, 8, 20, null)), Room("east-2")], 11, start, cancel), cancel),
            Task.Run(() => StreamAsync(west.IngestPort, [Room("west-1"), Room("west-2", ("display", 60, 6, 20, 70))], 21, start, cancel), cancel));

        // Step 2 begins while the rooms play: the same content lands in both inboxes at once.
        RecordingFile.CopyInto(sharedPath, east.Inbox);
        RecordingFile.CopyInto(sharedPath, west.Inbox);
        await streaming;

        foreach (var (instance, rooms) in new[] { (east, EastRooms), (west, WestRooms) })
        {
            foreach (var room in rooms)
            {
                await PollAsync($"stream_owners has {room} for {instance.Name} only and minute_ledger two full minutes of it", async () =>
                    await Texts(db, $"SELECT DISTINCT instance FROM stream_owners WHERE stream = '{room}'") is [var owner] && owner == instance.Name
                    && await Long(db, $"SELECT count(*) FROM minute_ledger WHERE stream = '{room}' AND source_key = '*'") >= 2, cancel);
            }
        }

        Check(await Long(db, $"SELECT count(*) FROM alerts WHERE stream = '{MainsRoom}' AND event = 'raised' AND instance = 'lab-east'") >= 1, "lab-east's mains room has a raised alert stored with instance lab-east");
        Check(await Long(db, $"SELECT count(*) FROM alerts WHERE stream = '{MainsRoom}' AND instance IS DISTINCT FROM 'lab-east'") == 0, "every alert row of lab-east's mains room names lab-east");
        await PollAsync("lab-west's display room raised and cleared (subsided), stored with instance lab-west", async () =>
            await Long(db, $"SELECT count(*) FROM alerts WHERE stream = '{DisplayRoom}' AND event = 'cleared' AND reason = 'subsided' AND instance = 'lab-west'") == 1, cancel);
        Check(await Long(db, $"SELECT count(*) FROM alerts WHERE stream = '{DisplayRoom}' AND instance IS DISTINCT FROM 'lab-west'") == 0, "every alert row of lab-west's display room names lab-west");
        Check(east.Listener.Received.Any(a => a.Stream == MainsRoom && a.Key == "mains/h1" && a.Event == "raised"), "lab-east published the mains raise of " + MainsRoom);

        // Step 2: the file in both inboxes is processed once.
        Step(2, "the same file dropped into both inboxes");
        await PollAsync("both inboxes empty", () => Task.FromResult(IsEmpty(east.Inbox) && IsEmpty(west.Inbox)), cancel);
        Check(await Long(db, "SELECT count(*) FROM file_journal") == 1, "one file_journal row");
        Check(await Texts(db, "SELECT state FROM file_journal") is ["archived"], "the file_journal row is archived");
        var fileWinner = (await Texts(db, "SELECT instance FROM file_journal")).Single();
        var reports = new[] { east, west }.SelectMany(i => Directory.EnumerateFiles(i.Archive, "*.report.json", SearchOption.AllDirectories)).ToList();
        Check(reports.Count == 1, $"exactly one report across both archive folders (found {reports.Count}: {string.Join(", ", reports)})");
        Check(reports[0].StartsWith(Instance(fileWinner).Archive, StringComparison.Ordinal), $"the report is in the archive of {fileWinner}, which the journal names");
        foreach (var instance in new[] { east, west })
        {
            // The loser files its copy beside nothing: as already processed, without a report of its own.
            Check(File.Exists(Path.Combine(instance.Archive, SharedStream, SharedFile)), $"{instance.Name} filed its copy under archive/{SharedStream}/");
        }

        Check(await Long(db, $"SELECT count(*) FROM alerts WHERE stream = '{SharedStream}' AND event = 'raised'") == 1, "the file's mains alert was raised once");
        Check(await Long(db, $"SELECT count(*) FROM (SELECT 1 FROM alerts WHERE stream = '{SharedStream}' GROUP BY key, event, utc_ms HAVING count(*) > 1) twice") == 0, "no alert event of the file stored twice");
        Check(await Texts(db, $"SELECT DISTINCT instance FROM alerts WHERE stream = '{SharedStream}'") is [var fileAlerts] && fileAlerts == fileWinner, "the file's alerts name the instance that claimed it");

        // Step 3: SIGKILL lab-east with its mains alert open; lab-west sweeps it and closes the alert.
        Step(3, "lab-east killed mid-alert");
        Check(!east.Listener.Received.Any(a => a.Stream == MainsRoom && a.Event == "cleared"), "the mains alert of " + MainsRoom + " is still open before the kill (no clear published)");
        east.Kill();
        await PollAsync($"a clear/{MainsRoom} with reason 'instance stopped' on lab-west's publish socket", () => Task.FromResult(
            west.Listener.Messages.Any(m => m.Topic == "clear/" + MainsRoom && m.Body.GetProperty("reason").GetString() == "instance stopped")), cancel);
        Check(await Long(db, $"SELECT count(*) FROM alerts WHERE stream = '{MainsRoom}' AND event = 'cleared'") == 1, "the store has one clear of the mains alert");
        Check(await Texts(db, $"SELECT instance || '|' || reason FROM alerts WHERE stream = '{MainsRoom}' AND event = 'cleared'") is ["lab-west|instance stopped"], "the clear is lab-west's, reason 'instance stopped'");
        Check(await Texts(db, "SELECT stop_reason || '|' || swept_by || '|' || (stopped_utc_ms IS NOT NULL) FROM instances WHERE name = 'lab-east'") is ["instance stopped|lab-west|true"], "lab-east's instances row says stopped, swept by lab-west");

        // Step 4: lab-west stops cleanly, then both start together and render the finished day: exactly one of them.
        Step(4, "day summary rendered once and equal from either instance");
        Check(await west.StopAsync() == 0, "lab-west stopped cleanly (exit code 0)");
        Check(await Texts(db, "SELECT stop_reason FROM instances WHERE name = 'lab-west'") is ["clean stop"], "lab-west's instances row says clean stop");
        var dayStreams = new[] { "east-1", "east-2", SharedStream, "west-1", "west-2" }.Order(StringComparer.Ordinal).ToList();
        await Task.WhenAll(east.StartAsync(cancel), west.StartAsync(cancel));
        await PollAsync($"summary_renders has every stream of {dayText} and its page", async () =>
            await Long(db, $"SELECT count(*) FROM summary_renders WHERE day = '{dayText}'") == dayStreams.Count + 1, cancel);
        Check((await Texts(db, $"SELECT stream || '|' || zone FROM summary_renders WHERE day = '{dayText}' ORDER BY stream")).SequenceEqual(["|UTC", .. dayStreams.Select(s => s + "|UTC")]),
            "summary_renders has each (day, zone, stream) once");
        var renderers = new[] { east, west }.Where(i => Directory.Exists(Path.Combine(i.Summaries, dayText))).ToList();
        Check(renderers.Count == 1, $"the day's files are in exactly one instance's summaries folder (found in: {string.Join(", ", renderers.Select(i => i.Name))})");
        var renderer = renderers[0];
        var other = renderer == east ? west : east;
        Check(await Texts(db, $"SELECT instance FROM store_claims WHERE name = 'summary/{dayText}/UTC'") is [var claimant] && claimant == renderer.Name, $"the day's claim names {renderer.Name}, which wrote it");
        await PollAsync($"{renderer.Name} published summary/ for each stream of {dayText}", () => Task.FromResult(
            SummariesOf(renderer, dayText).Order(StringComparer.Ordinal).SequenceEqual(dayStreams)), cancel);
        Check(SummariesOf(other, dayText).Count == 0, $"{other.Name} published no summary of {dayText}");

        var rendered = Path.Combine(renderer.Summaries, dayText);
        var fromEast = Path.Combine(work, "summary-lab-east");
        var fromWest = Path.Combine(work, "summary-lab-west");
        var codes = await Task.WhenAll(east.RenderSummaryAsync(day, fromEast), west.RenderSummaryAsync(day, fromWest));
        Check(codes is [0, 0], $"humwatch summary exited 0 with either instance's settings (got {string.Join(", ", codes)})");
        foreach (var copy in new[] { Path.Combine(fromEast, dayText), Path.Combine(fromWest, dayText) })
        {
            Check(SameFiles(rendered, copy, out var difference), $"{copy} equals {rendered} byte for byte: {difference}");
        }

        Check(await east.StopAsync() == 0, "lab-east stopped cleanly at the end (exit code 0)");
        Check(await west.StopAsync() == 0, "lab-west stopped cleanly at the end (exit code 0)");
        _timings.Add(string.Create(CultureInfo.InvariantCulture, $"{_watch.Elapsed.TotalSeconds,6:0.0} s  done"));
        output.WriteLine(string.Join(Environment.NewLine, _timings));
        Directory.Delete(work, recursive: true);
    }

    /// <summary>Kills what still runs (a failed step) and closes the subscribers; the work folder stays for a look.</summary>
    public void Dispose()
    {
        _east?.Dispose();
        _west?.Dispose();
    }

    /// <summary>The file both inboxes get: 5 min of its own room, mains from 5 s on (an alert raised, cleared at its end).</summary>
    private static RoomSimulator FileRoom() => new(
        new SimulatedRoom
        {
            Name = SharedStream,
            SampleRateHz = KillPlan.SampleRateHz,
            Channels = SimulatedRoom.Montage(KillPlan.Channels),
            Tones = [new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = 6, OnsetSeconds = 5 }],
        },
        31);

    private static SimulatedRoom Room(string name, params (string Name, double Hz, double UvRms, double From, double? To)[] tones) => new()
    {
        Name = name,
        SampleRateHz = KillPlan.SampleRateHz,
        Channels = SimulatedRoom.Montage(KillPlan.Channels),
        Tones = [.. tones.Select(t => new SimulatedTone { Name = t.Name, FrequencyHz = t.Hz, AmplitudeUvRms = t.UvRms, OnsetSeconds = t.From, OffsetSeconds = t.To })],
    };

    /// <summary>Plays the rooms over one PUSH socket in 0.25 s chunks, paced to <see cref="Speed"/>, seeded.</summary>
    private static async Task StreamAsync(int ingestPort, SimulatedRoom[] rooms, int seed, DateTimeOffset startUtc, CancellationToken cancel)
    {
        using var sender = new ChunkSender(ingestPort);
        var simulators = rooms.Select((r, i) => new RoomSimulator(r, seed + i, startUtc)).ToList();
        var samples = (int)Math.Round(KillPlan.ChunkSeconds * KillPlan.SampleRateHz);
        var paced = Stopwatch.StartNew();
        for (var chunk = 0; chunk < StreamSeconds / KillPlan.ChunkSeconds; chunk++)
        {
            var wait = (chunk * KillPlan.ChunkSeconds / Speed) - paced.Elapsed.TotalSeconds;
            if (wait > 0)
            {
                await Task.Delay(TimeSpan.FromSeconds(wait), cancel);
            }

            for (var r = 0; r < rooms.Length; r++)
            {
                sender.Send(rooms[r].Name, simulators[r].Next(samples));
            }
        }
    }

    private FleetInstance Instance(string name) => name == _east!.Name ? _east : name == _west!.Name ? _west : throw Failure($"no instance named {name}");

    private static List<string> SummariesOf(FleetInstance instance, string day) =>
        [.. instance.Listener.Messages.Where(m => m.Topic.StartsWith("summary/", StringComparison.Ordinal) && m.Body.GetProperty("day").GetString() == day).Select(m => m.Body.GetProperty("stream").GetString()!)];

    private static bool IsEmpty(string folder) => !Directory.EnumerateFiles(folder, "*", SearchOption.AllDirectories).Any();

    /// <summary>Whether two folders hold the same files (relative names) with the same bytes; else what differs.</summary>
    private static bool SameFiles(string expected, string actual, out string difference)
    {
        var names = Directory.EnumerateFiles(expected, "*", SearchOption.AllDirectories).Select(f => Path.GetRelativePath(expected, f)).Order(StringComparer.Ordinal).ToList();
        var other = Directory.Exists(actual) ? Directory.EnumerateFiles(actual, "*", SearchOption.AllDirectories).Select(f => Path.GetRelativePath(actual, f)).Order(StringComparer.Ordinal).ToList() : [];
        if (names.Count == 0 || !names.SequenceEqual(other))
        {
            difference = $"files [{string.Join(", ", names)}] against [{string.Join(", ", other)}]";
            return false;
        }

        var unequal = names.Where(n => !File.ReadAllBytes(Path.Combine(expected, n)).AsSpan().SequenceEqual(File.ReadAllBytes(Path.Combine(actual, n)))).ToList();
        difference = unequal.Count == 0 ? $"{names.Count} files equal" : $"unequal: {string.Join(", ", unequal)}";
        return unequal.Count == 0;
    }

    private static async Task<long> Long(NpgsqlConnection db, string sql)
    {
        await using var command = new NpgsqlCommand(sql, db);
        return Convert.ToInt64(await command.ExecuteScalarAsync(), CultureInfo.InvariantCulture);
    }

    private static async Task<List<string>> Texts(NpgsqlConnection db, string sql)
    {
        await using var command = new NpgsqlCommand(sql, db);
        await using var reader = await command.ExecuteReaderAsync();
        var result = new List<string>();
        while (await reader.ReadAsync())
        {
            result.Add(reader.IsDBNull(0) ? "(null)" : Convert.ToString(reader.GetValue(0), CultureInfo.InvariantCulture)!);
        }

        return result;
    }

    private void Step(int step, string what)
    {
        _timings.Add(string.Create(CultureInfo.InvariantCulture, $"{_watch.Elapsed.TotalSeconds,6:0.0} s  step {step}: {what}"));
        output.WriteLine(_timings[^1]);
        _step = step;
    }

    /// <summary>Polls <paramref name="condition"/> every 100 ms for up to 60 s; fails the step saying what was awaited.</summary>
    private async Task PollAsync(string what, Func<Task<bool>> condition, CancellationToken cancel)
    {
        var deadline = Stopwatch.StartNew();
        while (!await condition())
        {
            if (deadline.Elapsed > TimeSpan.FromSeconds(60))
            {
                throw Failure($"not within 60 s: {what}");
            }

            await Task.Delay(100, cancel);
        }
    }

    private void Check(bool condition, string what)
    {
        if (!condition)
        {
            throw Failure(what);
        }
    }

    private XunitException Failure(string what) =>
        new($"step {_step} failed: {what}{Environment.NewLine}logs: {_east?.Logs}; {_west?.Logs}{Environment.NewLine}{string.Join(Environment.NewLine, _timings)}");
}
