using System.Data.Common;

namespace HumWatch.Host.Store;

/// <summary>How an instance's previous run ended, as its row said when it registered again.</summary>
internal enum InstanceStart
{
    /// <summary>No row: the first run of this name on the store.</summary>
    Fresh,

    /// <summary>The previous run marked itself stopped.</summary>
    Clean,

    /// <summary>The previous run neither stopped cleanly nor was noticed by a peer: its open alerts are this run's to close.</summary>
    Unclean,

    /// <summary>A peer found the previous run's heartbeat stale and closed its open alerts already.</summary>
    Swept,
}

/// <summary>One row of the <c>instances</c> table.</summary>
internal sealed record StoredInstance(
    string Name,
    DateTimeOffset StartedUtc,
    DateTimeOffset HeartbeatUtc,
    DateTimeOffset? StoppedUtc,
    string? StopReason,
    string? SweptBy,
    string BuildVersion);

/// <summary>
/// The <c>instances</c> table (heartbeats of the instances sharing the store) and <c>store_claims</c>. Every decision
/// that two processes could race for is one conditional UPDATE or INSERT whose affected-row count says who won, so
/// the database, not a read in C#, decides: a stale peer is swept by exactly one instance, and a restarted instance
/// closes its own alerts only when no peer has.
/// </summary>
internal sealed class InstanceTable(StoreConnection connection)
{
    /// <summary>stop_reason of an instance that stopped itself.</summary>
    public const string CleanStop = "clean stop";

    /// <summary>stop_reason of an instance a peer found stale (the clear reason "instance stopped" of its alerts).</summary>
    public const string SweptStop = "instance stopped";

    /// <summary>store_claims name: closing the alerts builds before schema 6 left open (their instance is NULL).</summary>
    public const string OlderBuildAlertsClaim = "older-build-alerts";

    private const string Columns = "name, started_utc_ms, heartbeat_utc_ms, stopped_utc_ms, stop_reason, swept_by, build_version";

    /// <summary>
    /// Marks <paramref name="name"/> running from <paramref name="nowUtc"/> and says how its previous run ended. One
    /// transaction of conditional statements, tried in turn until one changes a row.
    /// </summary>
    public InstanceStart Register(string name, string buildVersion, DateTimeOffset nowUtc)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(name);
        var now = nowUtc.ToUnixTimeMilliseconds();
        return connection.Run(c =>
        {
            using var transaction = c.BeginTransaction();
            var restart = $"UPDATE instances SET started_utc_ms = @now, heartbeat_utc_ms = @now, stopped_utc_ms = NULL, stop_reason = NULL, swept_by = NULL, build_version = @build WHERE name = @name AND ";
            var result =
                Changed(c, transaction, restart + "stopped_utc_ms IS NULL", name, buildVersion, now) ? InstanceStart.Unclean
                : Changed(c, transaction, restart + "stopped_utc_ms IS NOT NULL AND swept_by IS NOT NULL", name, buildVersion, now) ? InstanceStart.Swept
                : Changed(c, transaction, restart + "stopped_utc_ms IS NOT NULL", name, buildVersion, now) ? InstanceStart.Clean
                : Changed(c, transaction, $"INSERT INTO instances ({Columns}) VALUES (@name, @now, @now, NULL, NULL, NULL, @build) ON CONFLICT (name) DO NOTHING", name, buildVersion, now)
                    ? InstanceStart.Fresh
                    // Only a process of the same name registering at this very moment gets here: it closes, not this one.
                    : InstanceStart.Clean;
            transaction.Commit();
            return result;
        });
    }

    /// <summary>Writes the heartbeat; false when the row says stopped (a peer swept this instance while it was alive but silent).</summary>
    public bool Beat(string name, DateTimeOffset nowUtc) => connection.Run(c =>
    {
        using var command = Sql.Command(c, "UPDATE instances SET heartbeat_utc_ms = @now WHERE name = @name AND stopped_utc_ms IS NULL");
        Sql.Add(command, "@name", name);
        Sql.Add(command, "@now", nowUtc.ToUnixTimeMilliseconds());
        return command.ExecuteNonQuery() == 1;
    });

    /// <summary>Marks a clean stop; false when the row was marked stopped already.</summary>
    public bool MarkStopped(string name, DateTimeOffset nowUtc) => connection.Run(c =>
    {
        using var command = Sql.Command(c, "UPDATE instances SET stopped_utc_ms = @now, stop_reason = @reason, heartbeat_utc_ms = @now WHERE name = @name AND stopped_utc_ms IS NULL");
        Sql.Add(command, "@name", name);
        Sql.Add(command, "@now", nowUtc.ToUnixTimeMilliseconds());
        Sql.Add(command, "@reason", CleanStop);
        return command.ExecuteNonQuery() == 1;
    });

    /// <summary>Peers not stopped whose last heartbeat is before <paramref name="cutoffUtc"/>, by name.</summary>
    public IReadOnlyList<string> Stale(string me, DateTimeOffset cutoffUtc) => connection.Run(c =>
    {
        using var command = Sql.Command(c, "SELECT name FROM instances WHERE stopped_utc_ms IS NULL AND heartbeat_utc_ms < @cutoff AND name <> @me ORDER BY name");
        Sql.Add(command, "@me", me);
        Sql.Add(command, "@cutoff", cutoffUtc.ToUnixTimeMilliseconds());
        return Sql.ReadAll(command, static r => r.GetString(0));
    });

    /// <summary>
    /// Claims a stale peer for <paramref name="me"/>: marks it stopped ("instance stopped", swept by me) if it is still
    /// not stopped and its heartbeat still before <paramref name="cutoffUtc"/>. Returns its last heartbeat when this
    /// call won the claim (exactly one claimant wins), null otherwise.
    /// </summary>
    public DateTimeOffset? TryClaim(string peer, string me, DateTimeOffset cutoffUtc, DateTimeOffset nowUtc) => connection.Run(c =>
    {
        using var command = Sql.Command(c, """
            UPDATE instances SET stopped_utc_ms = @now, stop_reason = @reason, swept_by = @me
            WHERE name = @peer AND stopped_utc_ms IS NULL AND heartbeat_utc_ms < @cutoff
            RETURNING heartbeat_utc_ms
            """);
        Sql.Add(command, "@peer", peer);
        Sql.Add(command, "@me", me);
        Sql.Add(command, "@cutoff", cutoffUtc.ToUnixTimeMilliseconds());
        Sql.Add(command, "@now", nowUtc.ToUnixTimeMilliseconds());
        Sql.Add(command, "@reason", SweptStop);
        return Sql.Int64(command.ExecuteScalar()) is { } heartbeat ? DateTimeOffset.FromUnixTimeMilliseconds(heartbeat) : (DateTimeOffset?)null;
    });

    /// <summary>Claims the one-off job <paramref name="claim"/> for <paramref name="me"/>; true for the one instance that ever gets it.</summary>
    public bool ClaimOnce(string claim, string me, DateTimeOffset nowUtc) => connection.Run(c =>
    {
        using var command = Sql.Command(c, "INSERT INTO store_claims (name, instance, utc_ms) VALUES (@claim, @me, @now) ON CONFLICT (name) DO NOTHING");
        Sql.Add(command, "@claim", claim);
        Sql.Add(command, "@me", me);
        Sql.Add(command, "@now", nowUtc.ToUnixTimeMilliseconds());
        return command.ExecuteNonQuery() == 1;
    });

    /// <summary>
    /// Holds the job <paramref name="claim"/> for <paramref name="me"/>: true when it was free, held by <paramref name="me"/>
    /// already (a restart), or held by an instance marked stopped (then it passes to me). One conditional upsert, so
    /// of instances racing for a free claim exactly one gets it, and a live holder keeps it.
    /// </summary>
    public bool Hold(string claim, string me, DateTimeOffset nowUtc) => connection.Run(c =>
    {
        using var command = Sql.Command(c, $"""
            INSERT INTO store_claims (name, instance, utc_ms) VALUES (@claim, @me, @now)
            ON CONFLICT (name) DO UPDATE SET instance = excluded.instance, utc_ms = excluded.utc_ms
            WHERE {Sql.HolderReplaceable("store_claims.instance")}
            """);
        Sql.Add(command, "@claim", claim);
        Sql.Add(command, "@me", me);
        Sql.Add(command, "@now", nowUtc.ToUnixTimeMilliseconds());
        return command.ExecuteNonQuery() == 1;
    });

    /// <summary>The instance holding <paramref name="claim"/>, or null when nobody does.</summary>
    public string? Holder(string claim) => connection.Run(c =>
    {
        using var command = Sql.Command(c, "SELECT instance FROM store_claims WHERE name = @claim");
        Sql.Add(command, "@claim", claim);
        return command.ExecuteScalar() as string;
    });

    /// <summary>Every instance, by name.</summary>
    public IReadOnlyList<StoredInstance> All() => connection.Run(c =>
    {
        using var command = Sql.Command(c, $"SELECT {Columns} FROM instances ORDER BY name");
        return Sql.ReadAll(command, Read);
    });

    /// <summary>One instance's row, or null.</summary>
    public StoredInstance? Find(string name) => connection.Run(c =>
    {
        using var command = Sql.Command(c, $"SELECT {Columns} FROM instances WHERE name = @name");
        Sql.Add(command, "@name", name);
        return Sql.ReadAll(command, Read).FirstOrDefault();
    });

    private static bool Changed(DbConnection c, DbTransaction transaction, string text, string name, string build, long now)
    {
        using var command = Sql.Command(c, text, transaction);
        Sql.Add(command, "@name", name);
        Sql.Add(command, "@build", build);
        Sql.Add(command, "@now", now);
        return command.ExecuteNonQuery() == 1;
    }

    private static StoredInstance Read(DbDataReader r) => new(
        r.GetString(0),
        DateTimeOffset.FromUnixTimeMilliseconds(Sql.Int64(r, 1)),
        DateTimeOffset.FromUnixTimeMilliseconds(Sql.Int64(r, 2)),
        r.IsDBNull(3) ? null : DateTimeOffset.FromUnixTimeMilliseconds(Sql.Int64(r, 3)),
        Sql.NullableString(r, 4),
        Sql.NullableString(r, 5),
        r.GetString(6));
}
