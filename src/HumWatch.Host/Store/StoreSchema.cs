using System.Data.Common;
using System.Globalization;

namespace HumWatch.Host.Store;

/// <summary>
/// The store's schema as an ordered list of migrations. Migration i (0-based) brings the schema to version i + 1;
/// never edit a released migration, append a new one. <see cref="Migrations"/> is SQLite's list;
/// <see cref="PostgresSchema.Migrations"/> holds the same versions, tables and columns in PostgreSQL's types.
/// </summary>
internal static class StoreSchema
{
    /// <summary>Times are UTC: *_utc_ms in Unix milliseconds, minute_utc in Unix seconds of the minute's start.</summary>
    internal static readonly string[][] Migrations =
    [
        [
            """
            CREATE TABLE alerts (
                id INTEGER PRIMARY KEY AUTOINCREMENT,
                stream TEXT NOT NULL,
                key TEXT NOT NULL,
                kind TEXT NOT NULL,
                event TEXT NOT NULL CHECK (event IN ('raised', 'severity', 'cleared')),
                severity TEXT NOT NULL,
                source_name TEXT,
                harmonic INTEGER,
                aliased INTEGER NOT NULL DEFAULT 0,
                frequency_hz REAL,
                amplitude_uv_rms REAL,
                channel_share REAL,
                worst_channels TEXT NOT NULL,
                suggestion TEXT,
                stream_seconds REAL NOT NULL,
                utc_ms INTEGER NOT NULL,
                onset_utc_ms INTEGER,
                duration_s REAL,
                peak_uv_rms REAL,
                peak_severity TEXT,
                reason TEXT
            )
            """,
            "CREATE INDEX ix_alerts_utc ON alerts (utc_ms)",
            "CREATE INDEX ix_alerts_stream_utc ON alerts (stream, utc_ms)",
            """
            CREATE TABLE minute_ledger (
                stream TEXT NOT NULL,
                minute_utc INTEGER NOT NULL,
                source_key TEXT NOT NULL,
                monitored_s REAL NOT NULL,
                affected_s REAL NOT NULL,
                max_uv REAL,
                median_uv REAL,
                worst_channels TEXT NOT NULL,
                mains_hz REAL,
                parts INTEGER NOT NULL,
                PRIMARY KEY (stream, minute_utc, source_key)
            ) WITHOUT ROWID
            """,
            "CREATE INDEX ix_minute_ledger_minute ON minute_ledger (minute_utc)",
            """
            CREATE TABLE minute_ledger_parts (
                stream TEXT NOT NULL,
                session TEXT NOT NULL,
                seq INTEGER NOT NULL,
                minute_utc INTEGER NOT NULL,
                source_key TEXT NOT NULL,
                PRIMARY KEY (stream, session, seq)
            ) WITHOUT ROWID
            """,
            """
            CREATE TABLE file_journal (
                id INTEGER PRIMARY KEY AUTOINCREMENT,
                path TEXT NOT NULL,
                size_bytes INTEGER NOT NULL,
                mtime_utc_ms INTEGER NOT NULL,
                sha256 TEXT NOT NULL,
                state TEXT NOT NULL CHECK (state IN ('received', 'archived', 'rejected')),
                report_path TEXT,
                reason TEXT,
                utc_ms INTEGER NOT NULL,
                attempts INTEGER NOT NULL,
                UNIQUE (sha256, size_bytes)
            )
            """,
        ],
        SummarySchema.Migration,

        // Version 3: what decided a raised line's explanation, as JSON in the shape of a `check` line's "evidence".
        ["ALTER TABLE alerts ADD COLUMN evidence TEXT"],

        // Version 4: the ledger's amplitude columns say their unit, and the merged one says it is a weighted mean of
        // the parts' medians (the plain median only when one part covers the minute). RENAME COLUMN keeps every row.
        [
            "ALTER TABLE minute_ledger RENAME COLUMN max_uv TO max_uv_rms",
            "ALTER TABLE minute_ledger RENAME COLUMN median_uv TO mean_median_uv_rms",
        ],

        // Version 5: each alert's events in order, so a start finds the alerts an unclean stop left open without a
        // scan of the whole table, and a re-checked file finds the events it already stored.
        ["CREATE INDEX ix_alerts_stream_key_id ON alerts (stream, key, id)"],

        // Version 6: several instances on one store — their heartbeats, which instance watches which stream, and which
        // instance stored each alert event.
        FleetSchema.Migration,

        // Version 7: the instance that claimed a file (file_journal.instance), so a file another live instance holds
        // is not taken, while one of a stopped instance (or of this instance before a restart) is.
        [FleetSchema.FileClaimColumn],
    ];

    /// <summary>SQLite: its migrations; the file's own locking serialises two processes opening it.</summary>
    internal static readonly SchemaDialect Sqlite = new(
        Migrations,
        "CREATE TABLE IF NOT EXISTS schema_version (version INTEGER NOT NULL PRIMARY KEY, applied_utc_ms INTEGER NOT NULL)",
        null,
        "point Store:Path at another file");

    /// <summary>
    /// Every table of the current schema with the columns that order its rows uniquely (its key), the same on every
    /// provider: what a copy between stores walks, and what the contract tests hold both schemas to.
    /// </summary>
    internal static readonly IReadOnlyList<(string Table, string OrderBy)> Tables =
    [
        ("schema_version", "version"),
        ("alerts", "id"),
        ("minute_ledger", "stream, minute_utc, source_key"),
        ("minute_ledger_parts", "stream, session, seq"),
        ("file_journal", "id"),
        ("spectrum_parts", "stream, session, seq"),
        ("summary_renders", "day, zone, stream"),
        ("instances", "name"),
        ("stream_owners", "stream, instance, hour_utc"),
        ("store_claims", "name"),
    ];

    /// <summary>The version the database's schema is at (0 when it has no record yet).</summary>
    internal static int CurrentVersion(DbConnection connection, DbTransaction? transaction = null) =>
        checked((int)(Sql.Int64(Sql.Scalar(connection, "SELECT coalesce(max(version), 0) FROM schema_version", transaction)) ?? 0));

    /// <summary>Newest schema version this build knows.</summary>
    internal static int LatestVersion => Migrations.Length;

    /// <summary>Runs every migration the database lacks, each in its own transaction; returns the version reached.</summary>
    /// <exception cref="InvalidOperationException">The database's schema is newer than this build.</exception>
    internal static int Migrate(DbConnection connection, SchemaDialect dialect, string location, DateTimeOffset nowUtc)
    {
        var latest = dialect.Migrations.Count;
        while (true)
        {
            // Lock, version table and version are read again in every transaction: another instance may have migrated meanwhile.
            using var transaction = connection.BeginTransaction();
            if (dialect.LockStatement is not null)
            {
                Sql.Execute(connection, dialect.LockStatement, transaction);
            }

            Sql.Execute(connection, dialect.VersionTable, transaction);
            var current = CurrentVersion(connection, transaction);
            if (current > latest)
            {
                throw new InvalidOperationException(
                    $"Store {location} has schema version {current}, newer than this build knows ({latest}). Use a newer HumWatch, or {dialect.OtherStoreAdvice}.");
            }

            if (current == latest)
            {
                transaction.Commit();
                return latest;
            }

            var version = current + 1;
            foreach (var statement in dialect.Migrations[version - 1])
            {
                Sql.Execute(connection, statement, transaction);
            }

            using (var record = Sql.Command(connection, "INSERT INTO schema_version (version, applied_utc_ms) VALUES (@version, @utc)", transaction))
            {
                Sql.Add(record, "@version", version);
                Sql.Add(record, "@utc", nowUtc.ToUnixTimeMilliseconds());
                record.ExecuteNonQuery();
            }

            transaction.Commit();
        }
    }
}

/// <summary>How one provider keeps the schema: its migrations, its schema_version table, and how migrations exclude each other.</summary>
/// <param name="Migrations">Migration i (0-based) brings the schema to version i + 1.</param>
/// <param name="VersionTable">CREATE TABLE IF NOT EXISTS of schema_version.</param>
/// <param name="LockStatement">Run first in each migration transaction; null when the database serialises writers itself.</param>
/// <param name="OtherStoreAdvice">The end of the newer-schema message: which setting points elsewhere.</param>
internal sealed record SchemaDialect(IReadOnlyList<string[]> Migrations, string VersionTable, string? LockStatement, string OtherStoreAdvice);
