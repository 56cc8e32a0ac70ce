using System.Data.Common;
using System.Globalization;
using Microsoft.Data.Sqlite;
using Npgsql;

namespace HumWatch.Host.Store;

/// <summary>
/// The database of a store: opens it, brings the schema up to date, and serialises every use of it under one process
/// lock, so stream workers, the inbox and the summaries can share it. The table classes of <see cref="HumWatchStore"/>
/// go through <see cref="Run{T}"/> with System.Data.Common types; nothing else opens the database. Two providers:
/// <see cref="SqliteStoreConnection"/> (one file, one connection) and <see cref="PostgresStoreConnection"/> (one
/// NpgsqlDataSource, a pooled connection per operation).
/// </summary>
internal abstract class StoreConnection : IDisposable
{
    // One lock per store object. With SQLite it guards the one connection; with PostgreSQL it keeps what a table holds
    // in memory (FileJournal's claims in progress) in step with what it wrote, and keeps a process to one connection
    // at a time, as with SQLite. Concurrency between processes (instances) is the database's to decide.
    private readonly Lock _gate = new();
    private bool _disposed;

    protected StoreConnection(StoreProvider provider, string location, TimeProvider timeProvider)
    {
        Provider = provider;
        Location = location;
        TimeProvider = timeProvider;
    }

    /// <summary>The database engine.</summary>
    public StoreProvider Provider { get; }

    /// <summary>
    /// Where the store is, as messages and logs name it: the absolute path of a SQLite file, or
    /// "postgres host:port/database as user" (never a password).
    /// </summary>
    public string Location { get; }

    /// <summary>Schema version after migration.</summary>
    public int SchemaVersion { get; protected set; }

    /// <summary>Clock for time columns written by the tables.</summary>
    public TimeProvider TimeProvider { get; }

    /// <summary>Opens the store <paramref name="options"/> name (validated here).</summary>
    /// <exception cref="InvalidOperationException">The database cannot be opened, or its schema is newer than this build.</exception>
    public static StoreConnection Open(StoreOptions options, TimeProvider timeProvider)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(timeProvider);
        var errors = options.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentOutOfRangeException(nameof(options), string.Join(" ", errors));
        }

        return options.Provider == StoreProvider.Postgres
            ? new PostgresStoreConnection(options.ResolveConnectionString(), timeProvider)
            : new SqliteStoreConnection(options, timeProvider);
    }

    /// <summary>Runs <paramref name="work"/> on an open connection while holding the store's lock.</summary>
    /// <exception cref="ObjectDisposedException">The store was closed.</exception>
    public T Run<T>(Func<DbConnection, T> work)
    {
        ArgumentNullException.ThrowIfNull(work);
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            return RunOpen(work);
        }
    }

    /// <summary>Throws when the database cannot be written to now (read-only, locked past the timeout, gone). Writes nothing.</summary>
    public abstract void CheckWritable();

    /// <summary>
    /// After rows were copied into <paramref name="table"/> with their ids (<see cref="StoreCopy"/>), makes the next id
    /// the database hands out follow them. SQLite's AUTOINCREMENT follows by itself; an identity column does not.
    /// </summary>
    public virtual void AfterRowsCopiedWithIds(DbConnection connection, DbTransaction transaction, string table)
    {
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
            Close();
        }
    }

    /// <summary>Runs <paramref name="work"/> on an open connection; the caller holds the lock.</summary>
    protected abstract T RunOpen<T>(Func<DbConnection, T> work);

    /// <summary>Releases the connection or the pool; the caller holds the lock.</summary>
    protected abstract void Close();
}

/// <summary>
/// The one SQLite connection of a store file: WAL journal, busy timeout, <c>synchronous = FULL</c>, refused when the
/// file can only be opened read-only.
/// </summary>
internal sealed class SqliteStoreConnection : StoreConnection
{
    private readonly SqliteConnection _connection;

    /// <exception cref="InvalidOperationException">The file cannot be opened, or its schema is newer than this build.</exception>
    public SqliteStoreConnection(StoreOptions options, TimeProvider timeProvider)
        : base(StoreProvider.Sqlite, System.IO.Path.GetFullPath(options.Path), timeProvider)
    {
        var builder = new SqliteConnectionStringBuilder
        {
            DataSource = Location,
            Mode = SqliteOpenMode.ReadWriteCreate,
            // No pooling: Dispose must release the file (archives, tests, restarts).
            Pooling = false,
            DefaultTimeout = Math.Max(1, options.BusyTimeoutMs / 1000),
        };
        _connection = new SqliteConnection(builder.ToString());
        try
        {
            var directory = System.IO.Path.GetDirectoryName(Location);
            if (!string.IsNullOrEmpty(directory))
            {
                Directory.CreateDirectory(directory);
            }

            _connection.Open();

            // SQLite opens a write-protected file read-only without a word; every write would then fail for good.
            if (SQLitePCL.raw.sqlite3_db_readonly(_connection.Handle, "main") == 1)
            {
                throw new InvalidOperationException($"Store {Location}: the file can only be opened read-only (the file, its folder or the file system is write-protected)");
            }

            Sql.Execute(_connection, $"PRAGMA busy_timeout = {options.BusyTimeoutMs.ToString(CultureInfo.InvariantCulture)}");
            var mode = Sql.Scalar(_connection, "PRAGMA journal_mode = WAL") as string;
            if (!string.Equals(mode, "wal", StringComparison.OrdinalIgnoreCase))
            {
                throw new InvalidOperationException($"Store {Location}: could not switch to WAL journal mode (got '{mode}').");
            }

            // FULL: every commit is durable; alert and ledger writes are few per minute.
            Sql.Execute(_connection, "PRAGMA synchronous = FULL");
            SchemaVersion = StoreSchema.Migrate(_connection, StoreSchema.Sqlite, Location, timeProvider.GetUtcNow());
        }
        catch (SqliteException ex)
        {
            _connection.Dispose();
            throw new InvalidOperationException($"Store {Location}: cannot open the database: {ex.Message}", ex);
        }
        catch
        {
            _connection.Dispose();
            throw;
        }
    }

    /// <summary>Takes the file's write lock and lets it go again (BEGIN IMMEDIATE; ROLLBACK).</summary>
    public override void CheckWritable() => Run(c =>
    {
        Sql.Execute(c, "BEGIN IMMEDIATE");
        Sql.Execute(c, "ROLLBACK");
        return true;
    });

    protected override T RunOpen<T>(Func<DbConnection, T> work) => work(_connection);

    protected override void Close() => _connection.Dispose();
}

/// <summary>
/// A PostgreSQL database: one <see cref="NpgsqlDataSource"/> (its pool) per store, a pooled connection per operation.
/// Migrations run under a transaction-scoped advisory lock, so instances starting together do not race. A statement
/// PostgreSQL aborts as a deadlock or a serialization failure is run again (its transaction was rolled back whole).
/// </summary>
internal sealed class PostgresStoreConnection : StoreConnection
{
    private const int Attempts = 3;
    private readonly NpgsqlDataSource _source;

    /// <param name="connectionString">Resolved from Store:ConnectionString or Store:ConnectionStringFile; never logged.</param>
    /// <exception cref="InvalidOperationException">The server cannot be reached or refuses, or the schema is newer than this build.</exception>
    public PostgresStoreConnection(string connectionString, TimeProvider timeProvider)
        : base(StoreProvider.Postgres, StoreOptions.DescribePostgres(connectionString), timeProvider)
    {
        var builder = new NpgsqlConnectionStringBuilder(connectionString);
        builder.ApplicationName ??= "humwatch";
        _source = NpgsqlDataSource.Create(builder);
        try
        {
            using var connection = _source.OpenConnection();
            SchemaVersion = StoreSchema.Migrate(connection, PostgresSchema.Dialect, Location, timeProvider.GetUtcNow());
        }
        catch (NpgsqlException ex)
        {
            _source.Dispose();
            throw new InvalidOperationException($"Store {Location}: cannot open the database: {ex.Message}", ex);
        }
        catch
        {
            _source.Dispose();
            throw;
        }
    }

    /// <summary>A transaction that asks whether the server takes writes (a standby, or default_transaction_read_only, does not).</summary>
    public override void CheckWritable() => Run(c =>
    {
        using var transaction = c.BeginTransaction();
        if (Sql.Scalar(c, "SHOW transaction_read_only", transaction) is "on")
        {
            // SQLSTATE 25006 read_only_sql_transaction, as a write would fail (PostgreSQL Appendix A).
            throw new PostgresException("the database takes no writes (transaction_read_only is on)", "ERROR", "ERROR", PostgresErrorCodes.ReadOnlySqlTransaction);
        }

        transaction.Rollback();
        return true;
    });

    public override void AfterRowsCopiedWithIds(DbConnection connection, DbTransaction transaction, string table)
    {
        ArgumentNullException.ThrowIfNull(connection);

        // setval(…, false): the next nextval returns this value itself (PostgreSQL docs, "Sequence Manipulation Functions").
        Sql.Scalar(connection, $"SELECT setval(pg_get_serial_sequence('{table}', 'id'), coalesce((SELECT max(id) FROM {table}), 0) + 1, false)", transaction);
    }

    protected override T RunOpen<T>(Func<DbConnection, T> work)
    {
        for (var attempt = 1; ; attempt++)
        {
            try
            {
                using var connection = _source.OpenConnection();
                return work(connection);
            }
            catch (PostgresException ex) when (attempt < Attempts && ex.SqlState is PostgresErrorCodes.DeadlockDetected or PostgresErrorCodes.SerializationFailure)
            {
                // The server rolled the transaction back whole; running it again is safe.
            }
        }
    }

    protected override void Close() => _source.Dispose();
}
