using HumWatch.Core.Summaries;

namespace HumWatch.Host.Store;

/// <summary>
/// Hourly spectrum parts on their way to <see cref="SpectrumTable"/>: a part the store refuses waits (bounded) for the
/// store's retry instead of failing the frame that completed it. A re-delivered part is ignored by the table.
/// </summary>
internal sealed class DeferringSpectrumSink : ISpectrumPartSink
{
    /// <summary>Parts kept while the store refuses them: 1000, over 40 days of one stream's hours.</summary>
    public const int MaxPending = 1000;

    private readonly DeferredWrites<SpectrumPart> _parts;

    public DeferringSpectrumSink(SpectrumTable table, StoreHealth health)
    {
        ArgumentNullException.ThrowIfNull(table);
        _parts = new DeferredWrites<SpectrumPart>(
            "hourly spectrum parts", retryOrder: 3, MaxPending, p => table.Add([p]), p => $"part {p.Sequence} of session {p.SessionId} (stream {p.StreamId}, hour {p.HourUtc:o})", health);
    }

    /// <summary>Parts waiting for a store retry.</summary>
    public int Waiting => _parts.Waiting;

    public void OnSpectrumPart(SpectrumPart part) => _parts.Write(part);
}
