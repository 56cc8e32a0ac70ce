using System.Globalization;
using System.Text;
using Microsoft.Data.Sqlite;

namespace HumWatch.KillHarness;

/// <summary>The harness's verdict: figures for docs/reliability.md and the checks that failed (none when it passed).</summary>
internal sealed record KillReport(IReadOnlyList<string> Figures, IReadOnlyList<string> Failures)
{
    public bool Passed => Failures.Count == 0;

    public override string ToString()
    {
        var text = new StringBuilder();
        foreach (var figure in Figures)
        {
            text.Append("  ").AppendLine(figure);
        }

        text.AppendLine(Passed ? "PASSED" : "FAILED");
        foreach (var failure in Failures)
        {
            text.Append("  - ").AppendLine(failure);
        }

        return text.ToString();
    }
}

/// <summary>Reads the killed run's store and folders and compares its ledger with the reference run's.</summary>
internal static class KillChecks
{
    /// <summary>Tolerance on monitored/affected seconds, s: the ledger sums frame hops as doubles.</summary>
    private const double SecondsTolerance = 1e-6;

    /// <summary>Analysis:Spectra:HopSeconds at its default, s.</summary>
    private const double HopSeconds = 2;

    public static KillReport Check(KillPlan plan, RunOutcome killed, RunOutcome reference)
    {
        var figures = new List<string>();
        var failures = new List<string>();
        figures.Add($"kills: {killed.Kills} (while a file was being checked: {killed.KillsWithFileInInbox}; with an alert open: {killed.KillsWithAlertOpen})");
        figures.Add($"stream time: {plan.StreamSeconds:0} s in {plan.Rooms.Count} rooms at speed {plan.Options.Speed}; wall time killed run {killed.Elapsed.TotalSeconds:0} s, reference {reference.Elapsed.TotalSeconds:0} s");
        if (killed.ExitCode != 0)
        {
            failures.Add($"the last (orderly) stop exited with code {killed.ExitCode}");
        }

        using var store = Open(Path.Combine(killed.DataFolder, "humwatch.db"));
        using var referenceStore = Open(Path.Combine(reference.DataFolder, "humwatch.db"));

        var integrity = string.Join("; ", Column(store, "PRAGMA integrity_check"));
        figures.Add($"integrity_check: {integrity}");
        if (integrity != "ok")
        {
            failures.Add($"PRAGMA integrity_check: {integrity}");
        }

        CheckAlerts(store, killed, figures, failures);
        CheckFiles(store, killed, figures, failures);
        CheckLedger(plan, store, referenceStore, figures, failures);
        CheckOpenAlerts(store, killed, figures, failures);
        return new KillReport(figures, failures);
    }

    /// <summary>Every alert event that reached the subscriber is a row of the alerts table (the store is written before the publish).</summary>
    private static void CheckAlerts(SqliteConnection store, RunOutcome killed, List<string> figures, List<string> failures)
    {
        var rows = new HashSet<PublishedAlert>();
        using (var command = new SqliteCommand("SELECT stream, key, event, utc_ms FROM alerts", store))
        using (var reader = command.ExecuteReader())
        {
            while (reader.Read())
            {
                rows.Add(new PublishedAlert(reader.GetString(0), reader.GetString(1), reader.GetString(2), reader.GetInt64(3)));
            }
        }

        var published = killed.Published.Distinct().ToList();
        var missing = published.Where(p => !rows.Contains(p)).ToList();
        var total = Convert.ToInt64(Scalar(store, "SELECT count(*) FROM alerts"), CultureInfo.InvariantCulture);
        figures.Add($"alert events published and received: {killed.Published.Count} ({published.Count} distinct); in the store: {published.Count - missing.Count}; alert rows in the store: {total}");
        foreach (var m in missing.Take(10))
        {
            failures.Add($"published but not stored: {m.Event} {m.Key} of {m.Stream} at {DateTimeOffset.FromUnixTimeMilliseconds(m.UtcMs):O}");
        }

        if (missing.Count > 10)
        {
            failures.Add($"... and {missing.Count - 10} more published alert events not stored");
        }

        if (published.Count == 0)
        {
            failures.Add("no alert event was received at all: the run proves nothing about alerts");
        }
    }

    /// <summary>Every dropped file left the inbox, sits once in the archive with one report, and has one archived journal entry.</summary>
    private static void CheckFiles(SqliteConnection store, RunOutcome killed, List<string> figures, List<string> failures)
    {
        var inbox = Path.Combine(killed.DataFolder, "inbox");
        var archive = Path.Combine(killed.DataFolder, "archive");
        var rejected = Path.Combine(killed.DataFolder, "rejected");
        var left = Directory.EnumerateFiles(inbox, "*", SearchOption.AllDirectories).ToList();
        foreach (var file in left)
        {
            failures.Add($"still in the inbox: {file}");
        }

        var rejectedFiles = Directory.Exists(rejected) ? Directory.GetFiles(rejected) : [];
        foreach (var file in rejectedFiles)
        {
            failures.Add($"rejected: {file}");
        }

        var states = new Dictionary<string, (string State, int Attempts, int Entries)>(StringComparer.Ordinal);
        using (var command = new SqliteCommand("SELECT path, state, attempts FROM file_journal", store))
        using (var reader = command.ExecuteReader())
        {
            while (reader.Read())
            {
                var name = Path.GetFileName(reader.GetString(0));
                states[name] = states.TryGetValue(name, out var seen)
                    ? (reader.GetString(1), reader.GetInt32(2), seen.Entries + 1)
                    : (reader.GetString(1), reader.GetInt32(2), 1);
            }
        }

        var retried = 0;
        var good = 0;
        foreach (var name in killed.DroppedFiles)
        {
            var stem = Path.GetFileNameWithoutExtension(name);
            var folder = Path.Combine(archive, stem);
            var copies = Directory.Exists(folder) ? Directory.GetFiles(folder, stem + "*.edf") : [];
            var reports = Directory.Exists(folder) ? Directory.GetFiles(folder, "*.report.json") : [];
            if (copies.Length != 1 || reports.Length != 1)
            {
                failures.Add($"{name}: {copies.Length} archived copies and {reports.Length} reports (want 1 and 1)");
            }
            else
            {
                good++;
            }

            if (!states.TryGetValue(name, out var entry) || entry.State != "archived" || entry.Entries != 1)
            {
                failures.Add($"{name}: journal {(states.ContainsKey(name) ? $"{entry.Entries} entries, state {entry.State}" : "has no entry")} (want one, archived)");
            }
            else if (entry.Attempts > 1)
            {
                retried++;
            }
        }

        var raisesOfRetried = killed.DroppedFiles.Where(n => states.TryGetValue(n, out var e) && e.Attempts > 1)
            .Sum(n => Convert.ToInt64(Scalar(store, $"SELECT count(*) FROM alerts WHERE event = 'raised' AND stream = '{Path.GetFileNameWithoutExtension(n)}'"), CultureInfo.InvariantCulture));
        figures.Add($"raise rows of the files checked again (one raise each when a check is not repeated): {raisesOfRetried} for {retried} files");
        figures.Add($"files dropped: {killed.DroppedFiles.Count}; archived once with one report: {good}; checked again after a kill mid-file: {retried}; left in the inbox: {left.Count}; rejected: {rejectedFiles.Length}");
    }

    /// <summary>
    /// The live rooms' ledger against the uninterrupted reference run of the same stream time. Exact equality of every
    /// row does not hold: a kill loses the open minute (and a closed minute whose row was still waiting for the
    /// writer's 1 s tick), and the restarted session's frames lie on a grid shifted by the kill's offset, which moves
    /// the edges of an episode by up to a hop and can tip a line's attribution at an edge. So the hard check is on the
    /// monitored seconds of each minute (the "*" row): equal to the reference's in every minute no kill touched, and
    /// never above it in the minutes one did (nothing counted twice). Per-source rows are compared and reported only.
    /// </summary>
    private static void CheckLedger(KillPlan plan, SqliteConnection store, SqliteConnection reference, List<string> figures, List<string> failures)
    {
        var killedRows = Ledger(store);
        var referenceRows = Ledger(reference);
        var touched = TouchedMinutes(plan);
        var endMinute = plan.Options.StartUtc.ToUnixTimeSeconds() + (60 * (long)Math.Floor(plan.StreamSeconds / 60));
        int clean = 0, cleanEqual = 0, killMinutes = 0, over = 0, sourceRows = 0, sourceEqual = 0;
        var lostSeconds = 0.0;
        foreach (var (key, want) in referenceRows.Where(r => r.Key.Source == "*"))
        {
            var got = killedRows.TryGetValue(key, out var row) ? row.MonitoredS : 0;
            var label = $"ledger {key.Stream} {DateTimeOffset.FromUnixTimeSeconds(key.MinuteUtc):HH:mm}";
            if (got > want.MonitoredS + SecondsTolerance)
            {
                over++;
                failures.Add($"{label}: {got:0.###} s monitored, more than the reference's {want.MonitoredS:0.###} s (counted twice)");
            }
            else if (key.MinuteUtc == endMinute && got >= want.MonitoredS - HopSeconds - SecondsTolerance)
            {
                // The stream's last minute: a restarted session's frame grid is shifted, so its coverage ends up to one hop earlier.
                clean++;
                cleanEqual++;
            }
            else if (!touched.Contains(key.MinuteUtc))
            {
                clean++;
                if (Math.Abs(got - want.MonitoredS) <= SecondsTolerance)
                {
                    cleanEqual++;
                }
                else
                {
                    failures.Add($"{label}: {got:0.###} s monitored, the reference {want.MonitoredS:0.###} s, in a minute no kill touched");
                }
            }
            else
            {
                killMinutes++;
                lostSeconds += want.MonitoredS - got;
            }
        }

        foreach (var (key, got) in killedRows.Where(r => r.Key.Source != "*" && !touched.Contains(r.Key.MinuteUtc)))
        {
            sourceRows++;
            sourceEqual += referenceRows.TryGetValue(key, out var want) && Math.Abs(want.AffectedS - got.AffectedS) <= SecondsTolerance ? 1 : 0;
        }

        figures.Add($"ledger minutes of the live rooms: reference {referenceRows.Count(r => r.Key.Source == "*")}; untouched by a kill {clean}, equal {cleanEqual} (the last within one hop); touched {killMinutes}, {lostSeconds:0.#} s monitored lost in all; above the reference {over}");
        figures.Add($"per-source rows in untouched minutes (reported, not checked): {sourceEqual} of {sourceRows} equal to the reference in affected seconds");
        if (referenceRows.Count == 0)
        {
            failures.Add("the reference run wrote no ledger row: the comparison proves nothing");
        }
    }

    /// <summary>
    /// Minutes (Unix s of their start) a kill may cut short: the one it fell in, and the one before when its row may
    /// still have been waiting: a minute's row is handed over with the first frame after it (one 2 s hop) and written
    /// on the writer's next 1 s tick, which is <c>Speed</c> seconds of stream time; 2 s more for the chunk in flight.
    /// </summary>
    private static HashSet<long> TouchedMinutes(KillPlan plan)
    {
        var start = plan.Options.StartUtc.ToUnixTimeSeconds();
        var margin = plan.Options.Speed + 4;
        var minutes = new HashSet<long>();
        foreach (var point in plan.Points.Where(p => p.Kill))
        {
            var t = (point.Chunk + 1) * KillPlan.ChunkSeconds;
            minutes.Add(start + (60 * (long)Math.Floor(t / 60)));
            minutes.Add(start + (60 * (long)Math.Floor((t - margin) / 60)));
        }

        return minutes;
    }

    /// <summary>
    /// After the last (orderly) stop no alert is open; the alerts a kill left open were closed by the next start
    /// ("service restarted"); no alert event is stored twice; and every alert's events alternate raise … clear.
    /// </summary>
    private static void CheckOpenAlerts(SqliteConnection store, RunOutcome killed, List<string> figures, List<string> failures)
    {
        var open = Convert.ToInt64(Scalar(store, """
            SELECT count(*) FROM alerts a
            JOIN (SELECT stream, key, max(id) AS id FROM alerts GROUP BY stream, key) newest ON newest.id = a.id
            WHERE a.event <> 'cleared'
            """), CultureInfo.InvariantCulture);
        var restarted = Convert.ToInt64(Scalar(store, "SELECT count(*) FROM alerts WHERE event = 'cleared' AND reason = 'service restarted'"), CultureInfo.InvariantCulture);
        var twice = Convert.ToInt64(Scalar(store, "SELECT count(*) - (SELECT count(*) FROM (SELECT DISTINCT stream, key, event, utc_ms FROM alerts)) FROM alerts"), CultureInfo.InvariantCulture);
        var reasons = string.Join(", ", Column(store, "SELECT coalesce(reason, '?') || ': ' || count(*) FROM alerts WHERE event = 'cleared' GROUP BY reason ORDER BY reason"));
        var broken = new List<string>();
        using (var command = new SqliteCommand("SELECT stream, key, event FROM alerts ORDER BY stream, key, id", store))
        using (var reader = command.ExecuteReader())
        {
            var openNow = new HashSet<(string, string)>();
            while (reader.Read())
            {
                var alert = (reader.GetString(0), reader.GetString(1));
                var isRaise = reader.GetString(2) == "raised";
                var wasOpen = openNow.Contains(alert);
                if (isRaise == wasOpen)
                {
                    broken.Add($"{alert.Item1} {alert.Item2}: {reader.GetString(2)} while {(wasOpen ? "open" : "closed")}");
                }

                if (reader.GetString(2) == "raised")
                {
                    openNow.Add(alert);
                }
                else if (reader.GetString(2) == "cleared")
                {
                    openNow.Remove(alert);
                }
            }
        }

        figures.Add($"alerts open after the last stop: {open}; closed at a restart (\"service restarted\"): {restarted}; clears by reason: {reasons}");
        figures.Add($"alert events stored twice: {twice}; events out of raise … clear order: {broken.Count}");
        if (open > 0)
        {
            failures.Add($"{open} alert(s) still open after the last orderly stop");
        }

        if (killed.KillsWithAlertOpen > 0 && restarted == 0)
        {
            failures.Add($"{killed.KillsWithAlertOpen} kill(s) came with an alert open, but no start closed one (\"service restarted\")");
        }

        if (twice > 0)
        {
            failures.Add($"{twice} alert event row(s) stored twice (same stream, key, event and UTC)");
        }

        failures.AddRange(broken.Take(10));
    }

    private static Dictionary<(string Stream, long MinuteUtc, string Source), (double MonitoredS, double AffectedS)> Ledger(SqliteConnection store)
    {
        var rows = new Dictionary<(string, long, string), (double, double)>();
        using var command = new SqliteCommand("SELECT stream, minute_utc, source_key, monitored_s, affected_s FROM minute_ledger WHERE stream LIKE 'room-%'", store);
        using var reader = command.ExecuteReader();
        while (reader.Read())
        {
            rows[(reader.GetString(0), reader.GetInt64(1), reader.GetString(2))] = (reader.GetDouble(3), reader.GetDouble(4));
        }

        return rows;
    }

    private static SqliteConnection Open(string path)
    {
        var connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = path, Mode = SqliteOpenMode.ReadOnly, Pooling = false }.ToString());
        connection.Open();
        return connection;
    }

    private static object Scalar(SqliteConnection connection, string sql)
    {
        using var command = new SqliteCommand(sql, connection);
        return command.ExecuteScalar()!;
    }

    private static List<string> Column(SqliteConnection connection, string sql)
    {
        using var command = new SqliteCommand(sql, connection);
        using var reader = command.ExecuteReader();
        var values = new List<string>();
        while (reader.Read())
        {
            values.Add(reader.GetString(0));
        }

        return values;
    }
}
