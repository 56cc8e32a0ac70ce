using System.Text.Json;
using System.Text.Json.Serialization;
using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Ledger;
using HumWatch.Core.Signals;
using HumWatch.Core.Summaries;
using HumWatch.Host.Ingest;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.EndToEnd;
using HumWatch.Host.Tests.Publishing.Support;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Options;
using Microsoft.Extensions.Time.Testing;

namespace HumWatch.Host.Tests.Monitoring;

/// <summary>Everything sessions put out: alert events, minute rows as the store receives them, hourly spectrum parts.</summary>
internal sealed class SessionOutputs : IAlertEventSink, ISpectrumPartSink, ILedgerStore
{
    public List<AlertEvent> Alerts { get; } = [];

    public List<MinuteRow> StoredRows { get; } = [];

    public List<SpectrumPart> Spectra { get; } = [];

    /// <summary>How many of the next writes the "store" refuses, as a locked database would.</summary>
    public int WritesToRefuse { get; set; }

    public int WriteCalls { get; private set; }

    public void OnAlertEvent(AlertEvent alertEvent) => Alerts.Add(alertEvent);

    public void OnSpectrumPart(SpectrumPart part) => Spectra.Add(part);

    public int AddMinuteRows(IReadOnlyList<MinuteRow> rows)
    {
        WriteCalls++;
        if (WritesToRefuse > 0)
        {
            WritesToRefuse--;
            throw new IOException("database is locked");
        }

        StoredRows.AddRange(rows);
        return rows.Count;
    }
}

/// <summary>A session factory as the service wires it (rows through a real <see cref="LedgerWriter"/>), on a fake clock.</summary>
internal sealed class SessionHarness : IDisposable
{
    private static readonly JsonSerializerOptions Json = new() { NumberHandling = JsonNumberHandling.AllowNamedFloatingPointLiterals };

    public SessionHarness(DateTimeOffset? nowUtc = null)
    {
        Time = new FakeTimeProvider(nowUtc ?? Rooms.Start);
        WriterLogger = new RecordingLogger<LedgerWriter>();
        Health = new StoreHealth("harness.db", Time, WriterLogger);
        Writer = new LedgerWriter(Outputs, WriterLogger, Time, health: Health);
        Factory = new StreamSessionFactory(
            new AnalysisOptions(),
            Options.Create(new AlertOptions()),
            Options.Create(new MonitorOptions()),
            Outputs,
            Writer,
            Time,
            Outputs);
    }

    public SessionOutputs Outputs { get; } = new();

    public FakeTimeProvider Time { get; }

    /// <summary>Logs of the writer and of <see cref="Health"/>.</summary>
    public RecordingLogger<LedgerWriter> WriterLogger { get; }

    /// <summary>The store's fault state the writer reports to; started, it retries refused rows.</summary>
    public StoreHealth Health { get; }

    public LedgerWriter Writer { get; }

    public StreamSessionFactory Factory { get; }

    public StreamMonitor Monitor(string streamId) => new(streamId, Factory, NullLogger.Instance);

    /// <summary>Hands each chunk to the monitor on this thread, as its worker would.</summary>
    public static void Feed(StreamMonitor monitor, IEnumerable<SampleChunk> chunks)
    {
        foreach (var chunk in chunks)
        {
            monitor.Process(StreamMonitor.MonitorItem.ForChunk(new StreamChunk(monitor.StreamId, SampleChunkOwner.CopyOf(chunk), "test")));
        }
    }

    /// <summary><paramref name="seconds"/> of the room in half-second chunks (which carry their UTC times).</summary>
    public static IEnumerable<SampleChunk> Chunks(Simulation.RoomSimulator room, double seconds)
    {
        var samples = (int)(room.Layout.SampleRateHz / 2);
        for (var i = 0; i < seconds * 2; i++)
        {
            yield return room.Next(samples);
        }
    }

    /// <summary>An alert event with every field, for comparing event lists (records compare lists by reference).</summary>
    public static string Describe(AlertEvent alertEvent) => alertEvent.GetType().Name + JsonSerializer.Serialize(alertEvent, alertEvent.GetType(), Json);

    /// <summary>A row with every field but its session id, which names the input (a file's hash, or the stream and start).</summary>
    public static string Describe(MinuteRow row) => JsonSerializer.Serialize(row with { SessionId = "" }, Json);

    /// <summary>A spectrum part with every field but its session id.</summary>
    public static string Describe(SpectrumPart part) => JsonSerializer.Serialize(
        new
        {
            part.StreamId,
            part.Sequence,
            part.HourUtc,
            part.BinWidthHz,
            part.Seconds,
            part.MeanPsdUv2PerHz,
            Lines = part.Lines.OrderBy(kv => kv.Key.ToString(), StringComparer.Ordinal).Select(kv => new { Key = kv.Key.ToString(), kv.Value.SumHz, kv.Value.Frames }).ToArray(),
        },
        Json);

    public void Dispose()
    {
        Writer.Dispose();
        Health.Dispose();
    }
}
