using HumWatch.Host.Notify;
using MimeKit;

namespace HumWatch.Host.Tests.Notify.Support;

/// <summary>Keeps every mail "sent" (thread-safe); throws the queued failures first, one per attempt.</summary>
internal sealed class RecordingMailTransport : IMailTransport
{
    private readonly List<MimeMessage> _sent = [];
    private readonly Queue<Exception> _failures = new();

    public string Server => "recording:25";

    public IReadOnlyList<MimeMessage> Sent
    {
        get
        {
            lock (_sent)
            {
                return [.. _sent];
            }
        }
    }

    public int Attempts { get; private set; }

    public void FailWith(params Exception[] failures)
    {
        lock (_sent)
        {
            foreach (var failure in failures)
            {
                _failures.Enqueue(failure);
            }
        }
    }

    public Task SendAsync(MimeMessage message, CancellationToken cancellationToken)
    {
        lock (_sent)
        {
            Attempts++;
            if (_failures.TryDequeue(out var failure))
            {
                throw failure;
            }

            // A copy: the target disposes its message after sending.
            using var stream = new MemoryStream();
            message.WriteTo(stream, cancellationToken);
            stream.Position = 0;
            _sent.Add(MimeMessage.Load(stream, cancellationToken));
        }

        return Task.CompletedTask;
    }
}
