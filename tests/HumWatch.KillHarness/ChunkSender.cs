using HumWatch.Core.Signals;
using HumWatch.Formats.Wire;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.KillHarness;

/// <summary>
/// The acquisition side: a PUSH socket to a service's ingest port that sends chunks in the real wire protocol
/// (<see cref="ChunkWireCodec"/>). ZeroMQ holds what it cannot send yet while the service is away.
/// </summary>
internal sealed class ChunkSender : IDisposable
{
    private readonly PushSocket _push = new();

    public ChunkSender(int ingestPort)
    {
        _push.Options.Linger = TimeSpan.Zero;
        _push.Options.SendHighWatermark = 10_000;
        _push.Connect($"tcp://127.0.0.1:{ingestPort}");
    }

    public void Send(string streamId, SampleChunk chunk)
    {
        var message = ChunkWireCodec.Encode(streamId, chunk);
        _push.SendMoreFrame(message.Header).SendFrame(message.Samples);
    }

    public void Dispose() => _push.Dispose();
}
