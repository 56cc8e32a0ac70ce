using System.Collections.Concurrent;
using System.Diagnostics.Tracing;

namespace HumWatch.Bench;

/// <summary>
/// Samples the runtime's allocation ticks (one event per ~100 KB allocated, naming the type that crossed the mark), so a
/// load step can say which types the allocation rate comes from. Diagnostic only; costs little.
/// </summary>
internal sealed class AllocationSampler : EventListener
{
    private const EventKeywords GcKeyword = (EventKeywords)0x1;

    private readonly ConcurrentDictionary<string, long> _bytesByType = new(StringComparer.Ordinal);

    /// <summary>The top types by sampled bytes, as "type MB" pairs.</summary>
    public IReadOnlyList<(string Type, double Mb)> Top(int count) =>
        [.. _bytesByType.OrderByDescending(p => p.Value).Take(count).Select(p => (p.Key, p.Value / 1048576.0))];

    protected override void OnEventSourceCreated(EventSource eventSource)
    {
        if (eventSource.Name == "Microsoft-Windows-DotNETRuntime")
        {
            EnableEvents(eventSource, EventLevel.Verbose, GcKeyword);
        }
    }

    protected override void OnEventWritten(EventWrittenEventArgs eventData)
    {
        if (eventData.EventName is not { } name || !name.StartsWith("GCAllocationTick", StringComparison.Ordinal) || eventData.Payload is null || eventData.PayloadNames is null)
        {
            return;
        }

        var typeIndex = eventData.PayloadNames.IndexOf("TypeName");
        var amountIndex = eventData.PayloadNames.IndexOf("AllocationAmount64");
        if (typeIndex < 0 || amountIndex < 0)
        {
            return;
        }

        var type = eventData.Payload[typeIndex] as string ?? "?";
        var amount = Convert.ToInt64(eventData.Payload[amountIndex], System.Globalization.CultureInfo.InvariantCulture);
        _bytesByType.AddOrUpdate(type, amount, (_, total) => total + amount);
    }
}
