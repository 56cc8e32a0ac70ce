using HumWatch.Core.Signals;

namespace HumWatch.Host.Ingest;

/// <summary>A decoded chunk on its way to the stream's monitor.</summary>
/// <param name="StreamId">Stream id from the wire header.</param>
/// <param name="Chunk">Samples in µV; owns its array.</param>
/// <param name="Origin">Endpoint the chunk arrived on (for logs), e.g. "tcp://127.0.0.1:5710".</param>
public sealed record StreamChunk(string StreamId, SampleChunk Chunk, string Origin);
