using System.Globalization;
using Microsoft.Data.Sqlite;

namespace HumWatch.Host.Store;

/// <summary>
/// The one SQLite connection of a store file: opens it (WAL journal, busy timeout, <c>synchronous = FULL</c>), brings
/// the schema up to date, and serialises every use of it under one lock, so stream workers, the inbox and the summaries
/// can share it. The table classes of <see cref="HumWatchStore"/> go through <see cref="Run{T}"/>; nothing else opens the file.
/// </summary>
internal sealed class StoreConnection : IDisposable
{
    private readonly Lock _gate = new();
    private readonly SqliteConnection _connection;
    private bool _disposed;

    /// <param name="options">Store options (validated here).</param>
    /// <param name="timeProvider">Clock for the migration record and for the tables' time columns.</param>
    /// <exception cref="InvalidOperationException">The file cannot be opened, or its schema is newer than this build.</exception>
    public StoreConnection(StoreOptions options, TimeProvider timeProvider)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(timeProvider);
        var errors = options.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentOutOfRangeException(nameof(options), string.Join(" ", errors));
        }

        TimeProvider = timeProvider;
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

            // SQLite opens a write-protected file read-only without a word; every write would then fail for good.
            if (SQLitePCL.raw.sqlite3_db_readonly(_connection.Handle, "main") == 1)
            {
                throw new InvalidOperationException($"Store {FullPath}: the file can only be opened read-only (the file, its folder or the file system is write-protected)");
            }

            Sql.Execute(_connection, $"PRAGMA busy_timeout = {options.BusyTimeoutMs.ToString(CultureInfo.InvariantCulture)}");
            var mode = Sql.Scalar(_connection, "PRAGMA journal_mode = WAL") as string;
            if (!string.Equals(mode, "wal", StringComparison.OrdinalIgnoreCase))
            {
                throw new InvalidOperationException($"Store {FullPath}: could not switch to WAL journal mode (got '{mode}').");
            }

            // FULL: every commit is durable; alert and ledger writes are few per minute.
            Sql.Execute(_connection, "PRAGMA synchronous = FULL");
            SchemaVersion = StoreSchema.Migrate(_connection, FullPath, timeProvider.GetUtcNow());
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

    /// <summary>Clock for time columns written by the tables.</summary>
    public TimeProvider TimeProvider { get; }

    /// <summary>Runs <paramref name="work"/> on the connection while holding the store's lock.</summary>
    /// <exception cref="ObjectDisposedException">The store was closed.</exception>
    public T Run<T>(Func<SqliteConnection, T> work)
    {
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            return work(_connection);
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
}
