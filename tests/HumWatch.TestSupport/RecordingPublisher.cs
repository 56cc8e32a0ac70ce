using HumWatch.Host.Publishing;

namespace HumWatch.TestSupport;

/// <summary>One message handed to the publisher.</summary>
public sealed record PublishedMessage(string Kind, string Stream, byte[] Body)
{
    /// <summary>The topic frame the socket would send ("&lt;kind&gt;/&lt;stream&gt;").</summary>
    public string Topic => Messages.Topic(Kind, Stream);
}

/// <summary>Accepts and keeps every message (thread-safe); optionally adds "publish" to a shared step list per call.</summary>
public sealed class RecordingPublisher(List<string>? steps = null) : IMessagePublisher
{
    private readonly List<PublishedMessage> _messages = [];

    /// <summary>A snapshot of the messages so far, oldest first.</summary>
    public IReadOnlyList<PublishedMessage> Published
    {
        get
        {
            lock (_messages)
            {
                return [.. _messages];
            }
        }
    }

    /// <summary>The topics of <see cref="Published"/>, in order.</summary>
    public IReadOnlyList<string> Topics => [.. Published.Select(m => m.Topic)];

    public bool TryPublish(string kind, string streamId, byte[] body)
    {
        lock (_messages)
        {
            steps?.Add("publish");
            _messages.Add(new PublishedMessage(kind, streamId, body));
        }

        return true;
    }
}
