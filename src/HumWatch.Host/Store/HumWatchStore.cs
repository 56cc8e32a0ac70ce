namespace HumWatch.Host.Store;

/// <summary>
/// The store of a process: one <see cref="StoreConnection"/> (SQLite: one file, WAL, busy timeout; PostgreSQL: one
/// pool; both: migrations and one lock) and one class per table over it, the same classes and SQL for both providers.
/// Safe to share between stream workers, the inbox and the summaries. Disposing closes the file or the pool.
/// </summary>
internal sealed class HumWatchStore : IDisposable
{
    private readonly StoreConnection _connection;

    /// <param name="options">Validated store options.</param>
    /// <param name="timeProvider">Clock for journal, render and migration times.</param>
    /// <param name="instance">This process's instance name (Instance:Name), written with each alert event; null for tools that only read.</param>
    /// <exception cref="InvalidOperationException">The database cannot be opened, or its schema is newer than this build.</exception>
    public HumWatchStore(StoreOptions options, TimeProvider timeProvider, string? instance = null)
    {
        _connection = StoreConnection.Open(options, timeProvider);
        Instance = instance;
        Alerts = new AlertTable(_connection, instance);
        Instances = new InstanceTable(_connection);
        StreamOwners = new StreamOwnerTable(_connection);
        Ledger = new LedgerTable(_connection);
        Files = new FileJournal(_connection, instance);
        Spectra = new SpectrumTable(_connection);
        Renders = new SummaryRenderTable(_connection);
        Activity = new StoreActivity(_connection);
    }

    /// <summary>
    /// Where the store is, as every message names it: the absolute path of a SQLite file, or for PostgreSQL
    /// "postgres host:port/database as user" (never a password).
    /// </summary>
    public string FullPath => _connection.Location;

    /// <summary>The database engine behind the store.</summary>
    public StoreProvider Provider => _connection.Provider;

    /// <summary>Schema version after migration.</summary>
    public int SchemaVersion => _connection.SchemaVersion;

    /// <summary>The connection itself, for connection-level settings; tests use it to make the store full or read-only.</summary>
    internal StoreConnection Connection => _connection;

    /// <summary>This process's instance name; null for tools that only read.</summary>
    public string? Instance { get; }

    /// <summary>Heartbeats of the instances sharing the store.</summary>
    public InstanceTable Instances { get; }

    /// <summary>Which instance watched which stream.</summary>
    public StreamOwnerTable StreamOwners { get; }

    /// <summary>Alert events.</summary>
    public AlertTable Alerts { get; }

    /// <summary>The minute ledger.</summary>
    public LedgerTable Ledger { get; }

    /// <summary>The processed-file journal.</summary>
    public FileJournal Files { get; }

    /// <summary>Hourly spectrum parts of the daily summaries.</summary>
    public SpectrumTable Spectra { get; }

    /// <summary>The record of summaries written.</summary>
    public SummaryRenderTable Renders { get; }

    /// <summary>Which streams and days have data.</summary>
    public StoreActivity Activity { get; }

    public void Dispose() => _connection.Dispose();
}
