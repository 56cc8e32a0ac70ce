namespace HumWatch.Host.Store;

/// <summary>
/// Schema of several instances sharing one store (version 6). Standard SQL only (no SQLite-only forms), so the same
/// statements serve every provider: times are Unix milliseconds (hours Unix seconds) as elsewhere in the store.
/// </summary>
internal static class FleetSchema
{
    /// <summary>
    /// instances: one row per instance name; stopped_utc_ms is NULL while it runs (or after it died and before a peer
    /// noticed). stream_owners: which instance watched a stream in which UTC hour of its data, and when it last did.
    /// store_claims: one-off jobs that exactly one instance may do. alerts.instance: the instance that stored the event
    /// (NULL in rows of older builds).
    /// </summary>
    internal static readonly string[] Migration =
    [
        """
        CREATE TABLE instances (
            name TEXT NOT NULL PRIMARY KEY,
            started_utc_ms INTEGER NOT NULL,
            heartbeat_utc_ms INTEGER NOT NULL,
            stopped_utc_ms INTEGER,
            stop_reason TEXT,
            swept_by TEXT,
            build_version TEXT NOT NULL
        )
        """,
        """
        CREATE TABLE stream_owners (
            stream TEXT NOT NULL,
            instance TEXT NOT NULL,
            hour_utc INTEGER NOT NULL,
            last_seen_utc_ms INTEGER NOT NULL,
            PRIMARY KEY (stream, instance, hour_utc)
        )
        """,
        "CREATE INDEX ix_stream_owners_seen ON stream_owners (last_seen_utc_ms)",
        """
        CREATE TABLE store_claims (
            name TEXT NOT NULL PRIMARY KEY,
            instance TEXT NOT NULL,
            utc_ms INTEGER NOT NULL
        )
        """,
        "ALTER TABLE alerts ADD COLUMN instance TEXT",
    ];

    /// <summary>Version 7 (SQLite): the instance that claimed a file's content; NULL in rows of older builds.</summary>
    internal const string FileClaimColumn = "ALTER TABLE file_journal ADD COLUMN instance TEXT";
}
