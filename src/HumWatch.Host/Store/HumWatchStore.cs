namespace HumWatch.Host.Store;

/// <summary>
/// The SQLite store of a process: one <see cref="StoreConnection"/> (WAL, busy timeout, migrations, one lock) and one
/// class per table over it. Safe to share between stream workers, the inbox and the summaries. Disposing closes the file.
/// </summary>
internal sealed class HumWatchStore : IDisposable
{
    private readonly StoreConnection _connection;

    /// <param name="options">Validated store options.</param>
    /// <param name="timeProvider">Clock for journal, render and migration times.</param>
    /// <exception cref="InvalidOperationException">The file cannot be opened, or its schema is newer than this build.</exception>
    public HumWatchStore(StoreOptions options, TimeProvider timeProvider)
    {
        _connection = new StoreConnection(options, timeProvider);
        Alerts = new AlertTable(_connection);
        Ledger = new LedgerTable(_connection);
        Files = new FileJournal(_connection);
        Spectra = new SpectrumTable(_connection);
        Renders = new SummaryRenderTable(_connection);
        Activity = new StoreActivity(_connection);
    }

    /// <summary>Absolute path of the database file.</summary>
    public string FullPath => _connection.FullPath;

    /// <summary>Schema version after migration.</summary>
    public int SchemaVersion => _connection.SchemaVersion;

    /// <summary>The connection itself, for connection-level settings; tests use it to make the store full or read-only.</summary>
    internal StoreConnection Connection => _connection;

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
