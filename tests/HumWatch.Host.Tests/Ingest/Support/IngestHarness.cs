using System.Diagnostics;
using System.Text;
using HumWatch.Core.Signals;
using HumWatch.Formats.Wire;
using HumWatch.Host.Ingest;
using Microsoft.Extensions.Options;
using Microsoft.Extensions.Time.Testing;

namespace HumWatch.Host.Tests.Ingest.Support;

/// <summary>The real ingest service with its queue and counters, wired by hand for one test.</summary>
internal sealed class IngestHarness : IAsyncDisposable
{
    private bool _started;

    public IngestHarness(IngestOptions options, HumWatch.Host.Monitoring.MonitorOptions? monitor = null)
    {
        Options = options;
        Time = new FakeTimeProvider(new DateTimeOffset(2025, 3, 1, 8, 0, 0, TimeSpan.Zero));
        Counters = new IngestCounters();
        QueueLogger = new RecordingLogger<IngestQueue>();
        ServiceLogger = new RecordingLogger<SocketIngestService>();
        Queue = new IngestQueue(options.QueueCapacity, Counters, QueueLogger, Time, options.WarningInterval);
        Pool = new SampleBufferPool(options.BufferBytes, poisonReturned: true);
        Service = new SocketIngestService(Microsoft.Extensions.Options.Options.Create(options), Queue, Counters, Pool, ServiceLogger, Time, monitor is null ? null : Microsoft.Extensions.Options.Options.Create(monitor));
    }

    public IngestOptions Options { get; }

    public FakeTimeProvider Time { get; }

    public IngestCounters Counters { get; }

    public IngestQueue Queue { get; }

    /// <summary>The pool decoded chunks rent from; returned arrays are poisoned with NaN.</summary>
    public SampleBufferPool Pool { get; }

    public RecordingLogger<IngestQueue> QueueLogger { get; }

    public RecordingLogger<SocketIngestService> ServiceLogger { get; }

    public SocketIngestService Service { get; }

    /// <summary>The first endpoint as bound (port resolved).</summary>
    public string Endpoint => Service.Endpoints[0];

    public static IngestOptions LoopbackOptions(Action<IngestEndpointOptions>? endpoint = null)
    {
        var options = new IngestOptions();
        var first = new IngestEndpointOptions { Address = "tcp://127.0.0.1:*" };
        endpoint?.Invoke(first);
        options.Endpoints.Add(first);
        return options;
    }

    public async Task StartAsync()
    {
        await Service.StartAsync(CancellationToken.None);
        _started = true;
    }

    /// <summary>Reads <paramref name="count"/> chunks, failing after a generous bound rather than hanging.</summary>
    public async Task<List<StreamChunk>> ReadAsync(int count, int timeoutSeconds = 30)
    {
        using var cts = new CancellationTokenSource(TimeSpan.FromSeconds(timeoutSeconds));
        var result = new List<StreamChunk>(count);
        try
        {
            while (result.Count < count)
            {
                result.Add(await Queue.Reader.ReadAsync(cts.Token));
            }
        }
        catch (OperationCanceledException)
        {
            throw new TimeoutException($"Received {result.Count} of {count} chunks within {timeoutSeconds} s.");
        }

        return result;
    }

    /// <summary>Bounded retry: polls until the condition holds or fails with <paramref name="what"/>.</summary>
    public static async Task WaitUntilAsync(Func<bool> condition, string what, int timeoutSeconds = 30)
    {
        var watch = Stopwatch.StartNew();
        while (!condition())
        {
            if (watch.Elapsed > TimeSpan.FromSeconds(timeoutSeconds))
            {
                throw new TimeoutException($"Gave up after {timeoutSeconds} s waiting for {what}.");
            }

            await Task.Delay(20);
        }
    }

    public async ValueTask DisposeAsync()
    {
        if (_started)
        {
            await Service.StopAsync(CancellationToken.None);
        }

        Service.Dispose();
    }
}

/// <summary>Test data builders.</summary>
internal static class Some
{
    public static StreamLayout Layout(double sampleRateHz, params string[] labels) =>
        new(sampleRateHz, [.. labels.Select(l => new ChannelInfo(l))]);

    /// <summary>A chunk whose samples encode stream, chunk number, channel and sample, so order and content can be checked.</summary>
    public static SampleChunk Chunk(StreamLayout layout, long firstIndex, int samplesPerChannel, float tag)
    {
        var data = new float[layout.ChannelCount * samplesPerChannel];
        for (var c = 0; c < layout.ChannelCount; c++)
        {
            for (var i = 0; i < samplesPerChannel; i++)
            {
                data[(c * samplesPerChannel) + i] = tag + (c * 1000) + ((firstIndex + i) * 0.5f);
            }
        }

        return new SampleChunk(layout, firstIndex, samplesPerChannel, data);
    }

    public static byte[] Utf8(string text) => Encoding.UTF8.GetBytes(text);
}
