using HumWatch.Host.Publishing;

namespace HumWatch.Host.Web;

/// <summary>
/// The PUB socket's publisher with the live page listening in: each message goes to the socket first, then to the
/// room board and, for alerts, clears and summaries, to the pages' event streams as it is. Never throws, never blocks.
/// </summary>
internal sealed class PublisherTap(IMessagePublisher inner, RoomBoard board, EventClients clients) : IMessagePublisher
{
    public bool TryPublish(string kind, string streamId, byte[] body)
    {
        var published = inner.TryPublish(kind, streamId, body);
        board.Offer(kind, streamId, body);
        if (kind != Messages.StatusKind && body is not null)
        {
            // Status is folded into the rooms' own updates; the rest reaches the pages as the socket sent it.
            clients.Broadcast(EventClients.Frame(kind, body));
        }

        return published;
    }
}
