using System.Data.Common;
using System.Diagnostics;
using HumWatch.Core.Alerts;
using HumWatch.Core.Attribution;
using HumWatch.Core.Findings;
using HumWatch.Host.Store;
using HumWatch.TestSupport;
using Microsoft.Data.Sqlite;
using Npgsql;

namespace HumWatch.Bench;

/// <summary>Rows in the tables the service writes while it streams, and for PostgreSQL the server's own write counters.</summary>
/// <param name="Commits">PostgreSQL: transactions committed in the database (pg_stat_database.xact_commit, reads included); 0 for SQLite.</param>
/// <param name="WalSyncs">PostgreSQL: WAL flushes to disk, the whole cluster (pg_stat_wal.wal_sync); 0 for SQLite.</param>
/// <param name="TuplesWritten">PostgreSQL: rows inserted, updated or deleted in the database (pg_stat_database), upserts' updates included; 0 for SQLite.</param>
internal readonly record struct StoreCounts(long Alerts, long LedgerParts, long LedgerRows, long SpectrumParts, long StreamOwners, long Commits, long WalSyncs, long TuplesWritten)
{
    /// <summary>Rows inserted: alert events, ledger parts (each also merged into a ledger row), spectrum parts, stream-owner rows (inserted or updated by the heartbeat).</summary>
    public long Rows => Alerts + LedgerParts + SpectrumParts + StreamOwners;

    public static StoreCounts operator -(StoreCounts a, StoreCounts b) => new(
        a.Alerts - b.Alerts, a.LedgerParts - b.LedgerParts, a.LedgerRows - b.LedgerRows, a.SpectrumParts - b.SpectrumParts,
        a.StreamOwners - b.StreamOwners, a.Commits - b.Commits, a.WalSyncs - b.WalSyncs, a.TuplesWritten - b.TuplesWritten);

    /// <summary>
    /// Without <paramref name="appends"/> probe appends: each is one alert row and, on PostgreSQL, one commit, one WAL
    /// flush (synchronous_commit on) and one tuple.
    /// </summary>
    public StoreCounts WithoutProbe(int appends, StoreProvider provider) => provider == StoreProvider.Postgres
        ? this with { Alerts = Alerts - appends, Commits = Commits - appends, WalSyncs = WalSyncs - appends, TuplesWritten = TuplesWritten - appends }
        : this with { Alerts = Alerts - appends };
}

/// <summary>
/// The store a streams step runs against: a SQLite file in the step's folder (the default), or a fresh database per step on
/// PostgreSQL — a private cluster on loopback with PostgreSQL's durable defaults (<see cref="PostgresServer"/> with
/// <c>Durable</c>), or the server <see cref="PostgresServer.ServerVariable"/> names. Counts rows from a connection of its
/// own, outside the service's store lock. Never prints a connection string.
/// </summary>
internal sealed class BenchStore : IDisposable
{
    private const string CountSql = """
        SELECT (SELECT count(*) FROM alerts), (SELECT count(*) FROM minute_ledger_parts), (SELECT count(*) FROM minute_ledger),
               (SELECT count(*) FROM spectrum_parts), (SELECT count(*) FROM stream_owners)
        """;

    private readonly PostgresServer? _server;

    private BenchStore(StoreProvider provider, PostgresServer? server)
    {
        Provider = provider;
        _server = server;
    }

    public StoreProvider Provider { get; }

    /// <summary>"SQLite" or "PostgreSQL", as the tables name it.</summary>
    public string Name => Provider == StoreProvider.Postgres ? "PostgreSQL" : "SQLite";

    /// <summary>The stores `--store` names: sqlite, postgres or both (SQLite first); null when the value is none of these.</summary>
    public static IReadOnlyList<BenchStore>? For(string value) => value switch
    {
        "sqlite" => [new BenchStore(StoreProvider.Sqlite, null)],
        "postgres" => [Postgres()],
        "both" => [new BenchStore(StoreProvider.Sqlite, null), Postgres()],
        _ => null,
    };

    /// <summary>What the store is, in one line, without credentials.</summary>
    public string Describe() => Provider == StoreProvider.Sqlite
        ? "SQLite file in the step's temp folder (WAL, synchronous = FULL, as the service opens it)"
        : Environment.GetEnvironmentVariable(PostgresServer.ServerVariable) is { Length: > 0 } named
            ? $"PostgreSQL server named by {PostgresServer.ServerVariable} ({StoreOptions.DescribePostgres(named)}), a fresh database per step"
            : "PostgreSQL private cluster (initdb in a temp folder, 127.0.0.1, durable defaults: fsync, synchronous_commit, full_page_writes on), a fresh database per step";

    /// <summary>A fresh store for one step in <paramref name="folder"/>: the host's settings for it and a way to count its rows.</summary>
    public StepStore Create(string folder)
    {
        if (_server is null)
        {
            var path = Path.Combine(folder, "humwatch.db");
            return new StepStore(StoreProvider.Sqlite, path, new Dictionary<string, string?> { ["Store:Path"] = path });
        }

        var connectionString = _server.CreateDatabase();
        return new StepStore(StoreProvider.Postgres, connectionString, new Dictionary<string, string?>
        {
            ["Store:Provider"] = "Postgres",
            ["Store:ConnectionString"] = connectionString,
        });
    }

    /// <summary>
    /// Times <paramref name="count"/> calls of <c>HumWatchStore.Alerts.AppendAlert</c> (a 50 Hz raise with its evidence, as
    /// the dispatcher stores it) on a fresh store with the real schema and nothing else running in it, after 10 untimed;
    /// returns each call's milliseconds.
    /// </summary>
    public double[] TimeAppends(int count)
    {
        var folder = Directory.CreateTempSubdirectory("humwatch-bench-appends-");
        try
        {
            var step = Create(folder.FullName);
            using var store = new HumWatchStore(step.Options(), TimeProvider.System, "bench");
            var times = new double[count];
            for (var i = -10; i < count; i++)
            {
                var started = Stopwatch.GetTimestamp();
                store.Alerts.AppendAlert(ProbeAlert("bench-appends", i + 10));
                if (i >= 0)
                {
                    times[i] = Stopwatch.GetElapsedTime(started).TotalMilliseconds;
                }
            }

            return times;
        }
        finally
        {
            folder.Delete(recursive: true);
        }
    }

    /// <summary>A 50 Hz mains raise like the ones the service stores, numbered <paramref name="n"/>.</summary>
    public static AlertRaised ProbeAlert(string stream, int n)
    {
        var utc = DateTimeOffset.UtcNow;
        return new AlertRaised(stream, FindingKey.Mains(1), AlertCategory.Line, new SourceMatch(SourceKind.Mains, "mains", 50, 1, false, 50, 0.01),
            null, n, utc, n - 8, utc.AddSeconds(-8), 50.01, 6.1, 1, ["Fz", "Cz", "Pz"],
            "bench probe", AlertSeverity.Marked);
    }

    public void Dispose() => _server?.Dispose();

    private static BenchStore Postgres() => new(StoreProvider.Postgres, new PostgresServer { Durable = true });

    /// <summary>One step's store.</summary>
    internal sealed class StepStore(StoreProvider provider, string location, IReadOnlyDictionary<string, string?> settings)
    {
        public StoreProvider Provider => provider;

        /// <summary>The Store: keys the host gets.</summary>
        public IReadOnlyDictionary<string, string?> Settings => settings;

        public StoreOptions Options() => provider == StoreProvider.Postgres
            ? new StoreOptions { Provider = StoreProvider.Postgres, ConnectionString = location }
            : new StoreOptions { Path = location };

        /// <summary>Counts now, on a connection of its own (none of the service's).</summary>
        public StoreCounts Count()
        {
            if (provider == StoreProvider.Sqlite)
            {
                using var sqlite = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = location, Mode = SqliteOpenMode.ReadOnly, Pooling = false }.ToString());
                sqlite.Open();
                var rows = Rows(sqlite);
                return rows;
            }

            using var postgres = new NpgsqlConnection(new NpgsqlConnectionStringBuilder(location) { Pooling = false }.ConnectionString);
            postgres.Open();
            var counts = Rows(postgres);
            using var stats = postgres.CreateCommand();
            stats.CommandText = """
                SELECT xact_commit, tup_inserted + tup_updated + tup_deleted, (SELECT wal_sync FROM pg_stat_wal)
                FROM pg_stat_database WHERE datname = current_database()
                """;
            using var reader = stats.ExecuteReader();
            reader.Read();
            return counts with { Commits = reader.GetInt64(0), TuplesWritten = reader.GetInt64(1), WalSyncs = reader.GetInt64(2) };
        }

        private static StoreCounts Rows(DbConnection connection)
        {
            using var command = connection.CreateCommand();
            command.CommandText = CountSql;
            using var reader = command.ExecuteReader();
            reader.Read();
            return new StoreCounts(reader.GetInt64(0), reader.GetInt64(1), reader.GetInt64(2), reader.GetInt64(3), reader.GetInt64(4), 0, 0, 0);
        }
    }
}
