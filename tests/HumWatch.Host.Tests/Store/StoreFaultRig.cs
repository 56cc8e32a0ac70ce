using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Ledger;
using HumWatch.Core.Summaries;
using HumWatch.Host.Health;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.EndToEnd;
using HumWatch.Host.Tests.Monitoring;
using Microsoft.Data.Sqlite;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Options;
using Microsoft.Extensions.Time.Testing;

namespace HumWatch.Host.Tests.Store;

/// <summary>
/// A real store file in a temp folder with the service's own writers over it — alert dispatcher, ledger writer, spectrum
/// sink, all reporting to one <see cref="StoreHealth"/> — on a fake clock, and a recording publisher. Everything the
/// sessions hand out is also kept here, so a test can check that the store ends with each of it exactly once.
/// </summary>
internal sealed class StoreFaultRig : IDisposable, IMinuteRowSink, ISpectrumPartSink
{
    public StoreFaultRig(int pageSizeBytes = 4096, int busyTimeoutMs = 5000)
    {
        var path = Temp.File("faults.db");
        if (pageSizeBytes != 4096)
        {
            // The page size is fixed when the first table is made; small pages make nearly every write need a new one.
            using var seed = new SqliteConnection($"Data Source={path};Pooling=False");
            seed.Open();
            using var command = seed.CreateCommand();
            command.CommandText = $"PRAGMA page_size = {pageSizeBytes}; CREATE TABLE seed (x); DROP TABLE seed;";
            command.ExecuteNonQuery();
        }

        Store = new HumWatchStore(new StoreOptions { Path = path, BusyTimeoutMs = busyTimeoutMs }, Time);
        Health = new StoreHealth(Store.FullPath, Time, Logger);
        Resources = new ResourceStatus(Health);
        Dispatcher = new AlertDispatcher(Store.Alerts, Publisher, new RecordingLogger<AlertDispatcher>(), Health);
        Writer = new LedgerWriter(Store.Ledger, new RecordingLogger<LedgerWriter>(), Time, health: Health);
        Spectra = new DeferringSpectrumSink(Store.Spectra, Health);
        Factory = new StreamSessionFactory(
            new AnalysisOptions(), Options.Create(new AlertOptions()), Options.Create(new MonitorOptions()), Dispatcher, this, Time, this);
    }

    public TempFolder Temp { get; } = new();

    public FakeTimeProvider Time { get; } = new(Rooms.Start);

    /// <summary>The store health's log.</summary>
    public RecordingLogger<StoreHealth> Logger { get; } = new();

    public RecordingPublisher Publisher { get; } = new();

    public HumWatchStore Store { get; }

    public StoreHealth Health { get; }

    public ResourceStatus Resources { get; }

    public AlertDispatcher Dispatcher { get; }

    public LedgerWriter Writer { get; }

    public DeferringSpectrumSink Spectra { get; }

    public StreamSessionFactory Factory { get; }

    /// <summary>Every minute row the sessions handed out, before the writer.</summary>
    public List<MinuteRow> Rows { get; } = [];

    /// <summary>Called with each minute row before the writer gets it (a test turns the store's fault on from here).</summary>
    public Action<MinuteRow>? BeforeRow { get; set; }

    /// <summary>Every spectrum part the sessions handed out, before the sink.</summary>
    public List<SpectrumPart> Parts { get; } = [];

    /// <summary>Starts the ledger writer's periodic write and the store health's retries on the fake clock.</summary>
    public async Task StartAsync()
    {
        await Writer.StartAsync(CancellationToken.None);
        await Health.StartAsync(CancellationToken.None);
    }

    public StreamMonitor Monitor(string streamId) => new(streamId, Factory, NullLogger.Instance);

    /// <summary>
    /// Feeds <paramref name="seconds"/> of the room in 10 s steps, moving the fake clock along, so the ledger writer
    /// writes (or is refused) every second of it and the store health retries when due.
    /// </summary>
    public void Play(StreamMonitor monitor, Simulation.RoomSimulator room, int seconds)
    {
        for (var done = 0; done < seconds; done += 10)
        {
            SessionHarness.Feed(monitor, SessionHarness.Chunks(room, seconds: 10));
            for (var s = 0; s < 10; s++)
            {
                Time.Advance(TimeSpan.FromSeconds(1));
            }
        }
    }

    /// <summary>Runs <paramref name="sql"/> on the store's own connection (connection-level settings live there).</summary>
    public void OnStoreConnection(string sql) => Store.Connection.Run(c =>
    {
        using var command = c.CreateCommand();
        command.CommandText = sql;
        return command.ExecuteNonQuery();
    });

    public long Count(string sql) => Store.Connection.Run(c =>
    {
        using var command = c.CreateCommand();
        command.CommandText = sql;
        return Convert.ToInt64(command.ExecuteScalar(), System.Globalization.CultureInfo.InvariantCulture);
    });

    /// <summary>The latest status body the service would publish for <paramref name="monitor"/> now.</summary>
    public JsonElement Status(StreamMonitor monitor)
    {
        var status = StreamMonitorService.StatusOf(monitor, null, Time.GetUtcNow(), new ResourceSnapshot(Resources));
        return JsonDocument.Parse(Messages.For(status)).RootElement.Clone();
    }

    public void OnMinuteRow(MinuteRow row)
    {
        BeforeRow?.Invoke(row);
        Rows.Add(row);
        Writer.OnMinuteRow(row);
    }

    public void OnSpectrumPart(SpectrumPart part)
    {
        Parts.Add(part);
        Spectra.OnSpectrumPart(part);
    }

    public void Dispose()
    {
        Writer.Dispose();
        Health.Dispose();
        Store.Dispose();
        Temp.Dispose();
    }
}
