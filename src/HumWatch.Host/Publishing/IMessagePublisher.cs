namespace HumWatch.Host.Publishing;

/// <summary>Hands a message to the publishing socket. Implementations never throw and never block on the network.</summary>
internal interface IMessagePublisher
{
    /// <summary>Queues a two-frame message, topic "&lt;kind&gt;/&lt;stream&gt;" then <paramref name="body"/>; false when it was dropped.</summary>
    /// <param name="kind">"alert", "clear", "status" or "summary".</param>
    /// <param name="streamId">Stream the message is about.</param>
    /// <param name="body">UTF-8 JSON with "v": 1; not copied, do not change it afterwards.</param>
    bool TryPublish(string kind, string streamId, byte[] body);
}
