using System.Globalization;
using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;
using Microsoft.Data.Sqlite;

namespace HumWatch.Host.Store;

/// <summary>
/// The SQLite store: alert events, the minute ledger and the processed-file journal. WAL mode, one connection
/// guarded by a lock (safe to share between stream workers), versioned schema migrations at open.
/// </summary>
/// <remarks>
/// Minute ledger double counting: every <see cref="MinuteRow"/> names its session and a running number. The pair
/// (stream, session, sequence) goes into minute_ledger_parts first; only when that insert is new is the row added
/// into minute_ledger (seconds added, maximum kept), in the same transaction. A re-delivered row is ignored, while a
/// later session's rows for the same minute add to it. Files use their content hash as the session, so re-processing
/// an interrupted file repeats the same (session, sequence) pairs and adds nothing twice.
/// </remarks>
internal sealed class HumWatchStore : IAlertEventStore, ILedgerStore, IDisposable
{
    private readonly Lock _gate = new();
    private readonly SqliteConnection _connection;
    private readonly TimeProvider _timeProvider;
    private readonly HashSet<(string Sha256, long SizeBytes)> _inProgress = [];
    private bool _disposed;

    /// <param name="options">Validated store options.</param>
    /// <param name="timeProvider">Clock for journal times.</param>
    /// <exception cref="InvalidOperationException">The file cannot be opened, or its schema is newer than this build.</exception>
    public HumWatchStore(StoreOptions options, TimeProvider timeProvider)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(timeProvider);
        var errors = options.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentOutOfRangeException(nameof(options), string.Join(" ", errors));
        }

        _timeProvider = timeProvider;
        FullPath = System.IO.Path.GetFullPath(options.Path);
        var builder = new SqliteConnectionStringBuilder
        {
            DataSource = FullPath,
            Mode = SqliteOpenMode.ReadWriteCreate,
            // No pooling: Dispose must release the file (archives, tests, restarts).
            Pooling = false,
            DefaultTimeout = Math.Max(1, options.BusyTimeoutMs / 1000),
        };
        _connection = new SqliteConnection(builder.ToString());
        try
        {
            var directory = System.IO.Path.GetDirectoryName(FullPath);
            if (!string.IsNullOrEmpty(directory))
            {
                Directory.CreateDirectory(directory);
            }

            _connection.Open();
            Execute($"PRAGMA busy_timeout = {options.BusyTimeoutMs.ToString(CultureInfo.InvariantCulture)}");
            var mode = Scalar("PRAGMA journal_mode = WAL") as string;
            if (!string.Equals(mode, "wal", StringComparison.OrdinalIgnoreCase))
            {
                throw new InvalidOperationException($"Store {FullPath}: could not switch to WAL journal mode (got '{mode}').");
            }

            // FULL: every commit is durable; alert and ledger writes are few per minute.
            Execute("PRAGMA synchronous = FULL");
            SchemaVersion = Migrate();
        }
        catch (SqliteException ex)
        {
            _connection.Dispose();
            throw new InvalidOperationException($"Store {FullPath}: cannot open the database: {ex.Message}", ex);
        }
        catch
        {
            _connection.Dispose();
            throw;
        }
    }

    /// <summary>Absolute path of the database file.</summary>
    public string FullPath { get; }

    /// <summary>Schema version after migration.</summary>
    public int SchemaVersion { get; }

    /// <summary>Stores one alert event; returns its row id.</summary>
    public long AppendAlert(AlertEvent alertEvent)
    {
        ArgumentNullException.ThrowIfNull(alertEvent);
        double? frequencyHz = null;
        double? amplitudeUvRms = null;
        double? share = null;
        IReadOnlyList<string> worst = [];
        string? suggestion = null;
        DateTimeOffset? onsetUtc = null;
        double? durationSeconds = null;
        double? peakUvRms = null;
        string? peakSeverity = null;
        string? reason = null;
        string? evidence = null;
        switch (alertEvent)
        {
            case AlertRaised raised:
                if (raised.Category == AlertCategory.Line)
                {
                    evidence = System.Text.Json.JsonSerializer.Serialize(Checking.CheckEvidence.From(raised), Checking.CheckReportJsonContext.Output.CheckEvidence);
                }

                (frequencyHz, amplitudeUvRms, share, worst, suggestion, onsetUtc) =
                    (Finite(raised.FrequencyHz), Finite(raised.AmplitudeUvRms), Finite(raised.ChannelShare), raised.WorstChannels, raised.Suggestion, raised.OnsetUtc);
                break;
            case AlertSeverityChanged changed:
                (frequencyHz, amplitudeUvRms, share, worst) =
                    (Finite(changed.FrequencyHz), Finite(changed.AmplitudeUvRms), Finite(changed.ChannelShare), changed.WorstChannels);
                break;
            case AlertCleared cleared:
                (frequencyHz, durationSeconds, peakUvRms, peakSeverity, reason) =
                    (Finite(cleared.FrequencyHz), Finite(cleared.DurationSeconds), Finite(cleared.PeakAmplitudeUvRms), cleared.PeakSeverity.ToText(), cleared.Reason.ToText());
                break;
            default:
                break;
        }

        var identified = alertEvent.Source.IsIdentified;
        lock (_gate)
        {
            ThrowIfDisposed();
            using var command = _connection.CreateCommand();
            command.CommandText = """
                INSERT INTO alerts (stream, key, kind, event, severity, source_name, harmonic, aliased, frequency_hz,
                    amplitude_uv_rms, channel_share, worst_channels, suggestion, stream_seconds, utc_ms, onset_utc_ms,
                    duration_s, peak_uv_rms, peak_severity, reason, evidence)
                VALUES ($stream, $key, $kind, $event, $severity, $sourceName, $harmonic, $aliased, $frequency,
                    $amplitude, $share, $worst, $suggestion, $streamSeconds, $utc, $onset,
                    $duration, $peak, $peakSeverity, $reason, $evidence);
                SELECT last_insert_rowid();
                """;
            Add(command, "$stream", alertEvent.StreamId);
            Add(command, "$key", alertEvent.Key.ToString());
            Add(command, "$kind", alertEvent.Key.Category.ToText());
            Add(command, "$event", alertEvent.EventKind.ToText());
            Add(command, "$severity", alertEvent.Severity.ToText());
            Add(command, "$sourceName", identified ? alertEvent.Source.Name : null);
            Add(command, "$harmonic", identified ? alertEvent.Source.Harmonic : null);
            Add(command, "$aliased", alertEvent.Source.Aliased ? 1 : 0);
            Add(command, "$frequency", frequencyHz);
            Add(command, "$amplitude", amplitudeUvRms);
            Add(command, "$share", share);
            Add(command, "$worst", JsonSerializer.Serialize([.. worst], StoreJsonContext.Output.StringArray));
            Add(command, "$suggestion", suggestion);
            Add(command, "$streamSeconds", alertEvent.StreamSeconds);
            Add(command, "$utc", alertEvent.Utc.ToUnixTimeMilliseconds());
            Add(command, "$onset", onsetUtc?.ToUnixTimeMilliseconds());
            Add(command, "$duration", durationSeconds);
            Add(command, "$peak", peakUvRms);
            Add(command, "$peakSeverity", peakSeverity);
            Add(command, "$reason", reason);
            Add(command, "$evidence", evidence);
            return (long)command.ExecuteScalar()!;
        }
    }

    /// <summary>Adds minute rows in one transaction; returns how many were new (re-delivered rows are skipped).</summary>
    public int AddMinuteRows(IReadOnlyList<MinuteRow> rows)
    {
        ArgumentNullException.ThrowIfNull(rows);
        lock (_gate)
        {
            ThrowIfDisposed();
            using var transaction = _connection.BeginTransaction();
            using var part = _connection.CreateCommand();
            part.Transaction = transaction;
            part.CommandText = """
                INSERT OR IGNORE INTO minute_ledger_parts (stream, session, seq, minute_utc, source_key)
                VALUES ($stream, $session, $seq, $minute, $key)
                """;
            using var upsert = _connection.CreateCommand();
            upsert.Transaction = transaction;
            // SQLite evaluates every SET expression against the row as it was, so the order below does not matter.
            upsert.CommandText = """
                INSERT INTO minute_ledger (stream, minute_utc, source_key, monitored_s, affected_s, max_uv, median_uv,
                    worst_channels, mains_hz, parts)
                VALUES ($stream, $minute, $key, $monitored, $affected, $max, $median, $worst, $mains, 1)
                ON CONFLICT (stream, minute_utc, source_key) DO UPDATE SET
                    monitored_s = monitored_s + excluded.monitored_s,
                    affected_s = affected_s + excluded.affected_s,
                    max_uv = CASE WHEN max_uv IS NULL THEN excluded.max_uv
                                  WHEN excluded.max_uv IS NULL THEN max_uv
                                  ELSE max(max_uv, excluded.max_uv) END,
                    median_uv = CASE WHEN median_uv IS NULL THEN excluded.median_uv
                                     WHEN excluded.median_uv IS NULL THEN median_uv
                                     WHEN affected_s + excluded.affected_s > 0
                                         THEN (median_uv * affected_s + excluded.median_uv * excluded.affected_s) / (affected_s + excluded.affected_s)
                                     ELSE median_uv END,
                    worst_channels = CASE WHEN excluded.max_uv IS NOT NULL AND (max_uv IS NULL OR excluded.max_uv > max_uv)
                                          THEN excluded.worst_channels ELSE worst_channels END,
                    mains_hz = CASE WHEN mains_hz IS NULL THEN excluded.mains_hz
                                    WHEN excluded.mains_hz IS NULL THEN mains_hz
                                    WHEN monitored_s + excluded.monitored_s > 0
                                        THEN (mains_hz * monitored_s + excluded.mains_hz * excluded.monitored_s) / (monitored_s + excluded.monitored_s)
                                    ELSE mains_hz END,
                    parts = parts + 1
                """;
            var added = 0;
            for (var i = 0; i < rows.Count; i++)
            {
                var row = rows[i];
                var minute = row.MinuteUtc.ToUnixTimeSeconds();
                var key = row.SourceKey.ToString();
                part.Parameters.Clear();
                Add(part, "$stream", row.StreamId);
                Add(part, "$session", row.SessionId);
                Add(part, "$seq", row.Sequence);
                Add(part, "$minute", minute);
                Add(part, "$key", key);
                if (part.ExecuteNonQuery() == 0)
                {
                    continue;
                }

                upsert.Parameters.Clear();
                Add(upsert, "$stream", row.StreamId);
                Add(upsert, "$minute", minute);
                Add(upsert, "$key", key);
                Add(upsert, "$monitored", row.MonitoredSeconds);
                Add(upsert, "$affected", row.AffectedSeconds);
                Add(upsert, "$max", Finite(row.MaxAmplitudeUvRms));
                Add(upsert, "$median", Finite(row.MedianAmplitudeUvRms));
                Add(upsert, "$worst", JsonSerializer.Serialize([.. row.WorstChannels], StoreJsonContext.Output.StringArray));
                Add(upsert, "$mains", Finite(row.MainsHz));
                upsert.ExecuteNonQuery();
                added++;
            }

            transaction.Commit();
            return added;
        }
    }

    /// <summary>Alert events with UTC time in [fromUtc, toUtc), oldest first; all streams when <paramref name="stream"/> is null.</summary>
    public IReadOnlyList<StoredAlert> AlertsBetween(DateTimeOffset fromUtc, DateTimeOffset toUtc, string? stream = null)
    {
        lock (_gate)
        {
            ThrowIfDisposed();
            using var command = _connection.CreateCommand();
            command.CommandText = """
                SELECT id, stream, key, kind, event, severity, source_name, harmonic, aliased, frequency_hz,
                    amplitude_uv_rms, channel_share, worst_channels, suggestion, stream_seconds, utc_ms, onset_utc_ms,
                    duration_s, peak_uv_rms, peak_severity, reason, evidence
                FROM alerts
                WHERE utc_ms >= $from AND utc_ms < $to AND ($stream IS NULL OR stream = $stream)
                ORDER BY utc_ms, id
                """;
            Add(command, "$from", fromUtc.ToUnixTimeMilliseconds());
            Add(command, "$to", toUtc.ToUnixTimeMilliseconds());
            Add(command, "$stream", stream);
            using var reader = command.ExecuteReader();
            var result = new List<StoredAlert>();
            while (reader.Read())
            {
                var key = FindingKey.Parse(reader.GetString(2));
                result.Add(new StoredAlert(
                    reader.GetInt64(0), reader.GetString(1), key, KindOf(reader.GetString(3), key), EventOf(reader.GetString(4)),
                    SeverityOf(reader.GetString(5)), NullableString(reader, 6), reader.IsDBNull(7) ? null : reader.GetInt32(7),
                    reader.GetInt64(8) != 0, NullableDouble(reader, 9), NullableDouble(reader, 10), NullableDouble(reader, 11),
                    Labels(reader.GetString(12)), NullableString(reader, 13), reader.GetDouble(14),
                    DateTimeOffset.FromUnixTimeMilliseconds(reader.GetInt64(15)),
                    reader.IsDBNull(16) ? null : DateTimeOffset.FromUnixTimeMilliseconds(reader.GetInt64(16)),
                    NullableDouble(reader, 17), NullableDouble(reader, 18),
                    reader.IsDBNull(19) ? null : SeverityOf(reader.GetString(19)),
                    reader.IsDBNull(20) ? null : ReasonOf(reader.GetString(20)))
                {
                    EvidenceJson = NullableString(reader, 21),
                });
            }

            return result;
        }
    }

    /// <summary>Alert events of one local day in <paramref name="zone"/>.</summary>
    public IReadOnlyList<StoredAlert> AlertsForDay(DateOnly day, TimeZoneInfo zone, string? stream = null)
    {
        var (from, to) = DayRangeUtc(day, zone);
        return AlertsBetween(from, to, stream);
    }

    /// <summary>Ledger rows of one stream with minute start in [fromUtc, toUtc), by minute then source key.</summary>
    public IReadOnlyList<StoredMinute> LedgerRows(string stream, DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(stream);
        lock (_gate)
        {
            ThrowIfDisposed();
            using var command = _connection.CreateCommand();
            command.CommandText = """
                SELECT stream, minute_utc, source_key, monitored_s, affected_s, max_uv, median_uv, worst_channels, mains_hz, parts
                FROM minute_ledger
                WHERE stream = $stream AND minute_utc >= $from AND minute_utc < $to
                ORDER BY minute_utc, source_key
                """;
            Add(command, "$stream", stream);
            Add(command, "$from", CeilingSeconds(fromUtc));
            Add(command, "$to", CeilingSeconds(toUtc));
            using var reader = command.ExecuteReader();
            var result = new List<StoredMinute>();
            while (reader.Read())
            {
                result.Add(new StoredMinute(
                    reader.GetString(0), DateTimeOffset.FromUnixTimeSeconds(reader.GetInt64(1)), FindingKey.Parse(reader.GetString(2)),
                    reader.GetDouble(3), reader.GetDouble(4), NullableDouble(reader, 5), NullableDouble(reader, 6),
                    Labels(reader.GetString(7)), NullableDouble(reader, 8), reader.GetInt32(9)));
            }

            return result;
        }
    }

    /// <summary>Streams that have ledger rows or alerts, ordinal order.</summary>
    public IReadOnlyList<string> ListStreams()
    {
        lock (_gate)
        {
            ThrowIfDisposed();
            using var command = _connection.CreateCommand();
            command.CommandText = "SELECT stream FROM minute_ledger UNION SELECT stream FROM alerts ORDER BY 1";
            using var reader = command.ExecuteReader();
            var result = new List<string>();
            while (reader.Read())
            {
                result.Add(reader.GetString(0));
            }

            return result;
        }
    }

    /// <summary>Local days in <paramref name="zone"/> that have ledger rows or alerts, oldest first.</summary>
    public IReadOnlyList<DateOnly> ListDays(TimeZoneInfo zone)
    {
        ArgumentNullException.ThrowIfNull(zone);
        var buckets = new List<long>();
        lock (_gate)
        {
            ThrowIfDisposed();
            using var command = _connection.CreateCommand();
            // 15-minute buckets: every UTC offset in use is a whole number of quarter hours, so a bucket never spans two local days.
            command.CommandText = "SELECT minute_utc / 900 FROM minute_ledger UNION SELECT utc_ms / 900000 FROM alerts";
            using var reader = command.ExecuteReader();
            while (reader.Read())
            {
                buckets.Add(reader.GetInt64(0));
            }
        }

        var days = new SortedSet<DateOnly>();
        foreach (var bucket in buckets)
        {
            var local = TimeZoneInfo.ConvertTime(DateTimeOffset.FromUnixTimeSeconds(bucket * 900), zone);
            days.Add(DateOnly.FromDateTime(local.DateTime));
        }

        return [.. days];
    }

    /// <summary>
    /// Claims a file for processing, exactly once across restarts. True when the caller should process it: it is new,
    /// or an earlier attempt was interrupted (state still received). False when it was already archived or rejected,
    /// or another worker of this process holds it; <paramref name="entry"/> then tells the stored state.
    /// </summary>
    public bool TryBegin(string path, long sizeBytes, DateTimeOffset modifiedUtc, string sha256, out FileJournalEntry entry)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(path);
        ArgumentOutOfRangeException.ThrowIfNegative(sizeBytes);
        ArgumentException.ThrowIfNullOrWhiteSpace(sha256);
        var hash = sha256.ToLowerInvariant();
        var now = _timeProvider.GetUtcNow().ToUnixTimeMilliseconds();
        lock (_gate)
        {
            ThrowIfDisposed();
            var existing = FindFileLocked(hash, sizeBytes);
            if (existing is not null && (existing.State != FileJournalState.Received || _inProgress.Contains((hash, sizeBytes))))
            {
                entry = existing;
                return false;
            }

            using var command = _connection.CreateCommand();
            command.CommandText = existing is null
                ? """
                  INSERT INTO file_journal (path, size_bytes, mtime_utc_ms, sha256, state, utc_ms, attempts)
                  VALUES ($path, $size, $mtime, $sha, 'received', $utc, 1)
                  """
                : """
                  UPDATE file_journal SET path = $path, mtime_utc_ms = $mtime, utc_ms = $utc, attempts = attempts + 1
                  WHERE sha256 = $sha AND size_bytes = $size
                  """;
            Add(command, "$path", path);
            Add(command, "$size", sizeBytes);
            Add(command, "$mtime", modifiedUtc.ToUnixTimeMilliseconds());
            Add(command, "$sha", hash);
            Add(command, "$utc", now);
            command.ExecuteNonQuery();
            _inProgress.Add((hash, sizeBytes));
            entry = FindFileLocked(hash, sizeBytes)!;
            return true;
        }
    }

    /// <summary>Records the outcome of a file claimed with <see cref="TryBegin"/>.</summary>
    /// <exception cref="InvalidOperationException">The file was not claimed, or is already complete.</exception>
    public FileJournalEntry Complete(string sha256, long sizeBytes, FileJournalState state, string? reportPath = null, string? reason = null)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(sha256);
        if (state == FileJournalState.Received)
        {
            throw new ArgumentOutOfRangeException(nameof(state), state, "A file completes as archived or rejected.");
        }

        var hash = sha256.ToLowerInvariant();
        lock (_gate)
        {
            ThrowIfDisposed();
            using var command = _connection.CreateCommand();
            command.CommandText = """
                UPDATE file_journal SET state = $state, report_path = $report, reason = $reason, utc_ms = $utc
                WHERE sha256 = $sha AND size_bytes = $size AND state = 'received'
                """;
            Add(command, "$state", StateText(state));
            Add(command, "$report", reportPath);
            Add(command, "$reason", reason);
            Add(command, "$utc", _timeProvider.GetUtcNow().ToUnixTimeMilliseconds());
            Add(command, "$sha", hash);
            Add(command, "$size", sizeBytes);
            if (command.ExecuteNonQuery() == 0)
            {
                throw new InvalidOperationException($"Store {FullPath}: file {hash} ({sizeBytes} bytes) is not being processed; complete it only after TryBegin.");
            }

            _inProgress.Remove((hash, sizeBytes));
            return FindFileLocked(hash, sizeBytes)!;
        }
    }

    /// <summary>The journal entry of a file's content, or null.</summary>
    public FileJournalEntry? FindFile(string sha256, long sizeBytes)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(sha256);
        lock (_gate)
        {
            ThrowIfDisposed();
            return FindFileLocked(sha256.ToLowerInvariant(), sizeBytes);
        }
    }

    public void Dispose()
    {
        lock (_gate)
        {
            if (_disposed)
            {
                return;
            }

            _disposed = true;
            _connection.Dispose();
        }
    }

    /// <summary>UTC range of a local day; a midnight skipped by a clock change starts the day at the first valid time.</summary>
    internal static (DateTimeOffset FromUtc, DateTimeOffset ToUtc) DayRangeUtc(DateOnly day, TimeZoneInfo zone)
    {
        ArgumentNullException.ThrowIfNull(zone);
        return (LocalStartUtc(day, zone), LocalStartUtc(day.AddDays(1), zone));
    }

    private static DateTimeOffset LocalStartUtc(DateOnly day, TimeZoneInfo zone)
    {
        var local = day.ToDateTime(TimeOnly.MinValue, DateTimeKind.Unspecified);
        while (zone.IsInvalidTime(local))
        {
            local = local.AddMinutes(15);
        }

        return new DateTimeOffset(TimeZoneInfo.ConvertTimeToUtc(local, zone), TimeSpan.Zero);
    }

    private int Migrate()
    {
        Execute("CREATE TABLE IF NOT EXISTS schema_version (version INTEGER NOT NULL PRIMARY KEY, applied_utc_ms INTEGER NOT NULL)");
        var current = Convert.ToInt32(Scalar("SELECT coalesce(max(version), 0) FROM schema_version"), CultureInfo.InvariantCulture);
        if (current > StoreSchema.LatestVersion)
        {
            throw new InvalidOperationException(
                $"Store {FullPath} has schema version {current}, newer than this build knows ({StoreSchema.LatestVersion}). Use a newer HumWatch, or point Store:Path at another file.");
        }

        for (var version = current + 1; version <= StoreSchema.LatestVersion; version++)
        {
            using var transaction = _connection.BeginTransaction();
            foreach (var statement in StoreSchema.Migrations[version - 1])
            {
                using var command = _connection.CreateCommand();
                command.Transaction = transaction;
                command.CommandText = statement;
                command.ExecuteNonQuery();
            }

            using (var record = _connection.CreateCommand())
            {
                record.Transaction = transaction;
                record.CommandText = "INSERT INTO schema_version (version, applied_utc_ms) VALUES ($version, $utc)";
                Add(record, "$version", version);
                Add(record, "$utc", _timeProvider.GetUtcNow().ToUnixTimeMilliseconds());
                record.ExecuteNonQuery();
            }

            transaction.Commit();
        }

        return StoreSchema.LatestVersion;
    }

    private FileJournalEntry? FindFileLocked(string sha256, long sizeBytes)
    {
        using var command = _connection.CreateCommand();
        command.CommandText = """
            SELECT id, path, size_bytes, mtime_utc_ms, sha256, state, report_path, reason, utc_ms, attempts
            FROM file_journal WHERE sha256 = $sha AND size_bytes = $size
            """;
        Add(command, "$sha", sha256);
        Add(command, "$size", sizeBytes);
        using var reader = command.ExecuteReader();
        if (!reader.Read())
        {
            return null;
        }

        return new FileJournalEntry(
            reader.GetInt64(0), reader.GetString(1), reader.GetInt64(2), DateTimeOffset.FromUnixTimeMilliseconds(reader.GetInt64(3)),
            reader.GetString(4), ParseState(reader.GetString(5)), NullableString(reader, 6), NullableString(reader, 7),
            DateTimeOffset.FromUnixTimeMilliseconds(reader.GetInt64(8)), reader.GetInt32(9));
    }

    private void Execute(string sql)
    {
        using var command = _connection.CreateCommand();
        command.CommandText = sql;
        command.ExecuteNonQuery();
    }

    private object? Scalar(string sql)
    {
        using var command = _connection.CreateCommand();
        command.CommandText = sql;
        return command.ExecuteScalar();
    }

    private void ThrowIfDisposed() => ObjectDisposedException.ThrowIf(_disposed, this);

    private static void Add(SqliteCommand command, string name, object? value) =>
        command.Parameters.AddWithValue(name, value ?? DBNull.Value);

    private static double? Finite(double value) => double.IsFinite(value) ? value : null;

    private static long CeilingSeconds(DateTimeOffset utc)
    {
        var ms = utc.ToUnixTimeMilliseconds();
        return (ms / 1000) + (ms % 1000 > 0 ? 1 : 0);
    }

    private static double? NullableDouble(SqliteDataReader reader, int ordinal) => reader.IsDBNull(ordinal) ? null : reader.GetDouble(ordinal);

    private static string? NullableString(SqliteDataReader reader, int ordinal) => reader.IsDBNull(ordinal) ? null : reader.GetString(ordinal);

    private static string[] Labels(string json) => JsonSerializer.Deserialize(json, StoreJsonContext.Default.StringArray) ?? [];

    // Text columns are read leniently: a value this build does not know must not make a whole day unreadable.

    /// <summary>The kind column; "site" (older stores) reads as a site tone; unknown text falls back to the key's category.</summary>
    private static FindingCategory KindOf(string text, FindingKey key) => FindingCategoryText.TryParse(text, out var kind) ? kind : key.Category;

    /// <summary>The event column; unknown text counts as a severity change, neither a raise nor a clear.</summary>
    private static AlertEventKind EventOf(string text) => AlertEventKindText.TryParse(text, out var kind) ? kind : AlertEventKind.SeverityChanged;

    /// <summary>A severity column; unknown text reads as none.</summary>
    private static AlertSeverity SeverityOf(string text) => AlertSeverityText.TryParse(text, out var severity) ? severity : AlertSeverity.None;

    /// <summary>The reason column; unknown text reads as no reason.</summary>
    private static AlertClearReason? ReasonOf(string text) => AlertClearReasonText.TryParse(text, out var reason) ? reason : null;

    private static string StateText(FileJournalState state) => state switch
    {
        FileJournalState.Archived => "archived",
        FileJournalState.Rejected => "rejected",
        _ => "received",
    };

    private static FileJournalState ParseState(string text) => text switch
    {
        "archived" => FileJournalState.Archived,
        "rejected" => FileJournalState.Rejected,
        _ => FileJournalState.Received,
    };
}
