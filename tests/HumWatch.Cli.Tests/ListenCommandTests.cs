using System.Text;
using HumWatch.Cli.Commands;
using NetMQ;
using NetMQ.Sockets;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>`listen` says once, on stderr, what it waits for, and says when the first message arrives even if it prints nothing for it.</summary>
public sealed class ListenCommandTests
{
    [Fact]
    public async Task Listen_says_what_it_waits_for_once_and_then_that_messages_arrive()
    {
        using var publisher = new PublisherSocket();
        publisher.Options.Linger = TimeSpan.Zero;
        var port = publisher.BindRandomPort("tcp://127.0.0.1");
        var endpoint = $"tcp://127.0.0.1:{port}";
        var output = new SyncWriter();
        var notes = new SyncWriter();
        using var stop = new CancellationTokenSource();

        var listening = Task.Run(() => ListenCommand.Listen(endpoint, "", includeStatus: false, raw: false, output, notes, stop.Token));

        // Before anything is published: one line naming the endpoint and that status needs --status.
        await Until(() => notes.Text.Length > 0, "the waiting note");
        Assert.Equal(
            $"humwatch listen: waiting for messages from {endpoint}, every topic (alert/, clear/, status/, summary/). Nothing arrives until a HumWatch ('run' or 'demo') publishes there and something happens. Status messages come every Publish:StatusIntervalSeconds per stream but are printed only with --status. Ctrl-C stops.",
            notes.Text.TrimEnd());

        // A subscriber joins a little after it connects, so publish until the status is heard.
        var status = Encoding.UTF8.GetBytes("""{"v":1,"stream":"room-1","utc":"2026-05-04T09:01:00Z","framesAnalysed":3,"linesPresent":0,"activeAlerts":0,"chunksAccepted":4,"chunksDropped":0,"chunksRejected":0,"lagSeconds":0.5}""");
        await Until(() => { publisher.SendMoreFrame("status/room-1").SendFrame(status); return notes.Text.Contains("receiving from", StringComparison.Ordinal); }, "the first message");
        await stop.CancelAsync();
        Assert.Equal(0, await listening);

        var lines = notes.Text.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(2, lines.Length);
        Assert.Equal($"humwatch listen: receiving from {endpoint} (first message: status/room-1, not printed; --status shows status messages).", lines[1].TrimEnd());
        Assert.Equal("", output.Text);
    }

    [Fact]
    public void The_waiting_note_names_the_topic_filter_and_drops_the_status_hint_when_status_is_shown()
    {
        var note = ListenCommand.WaitingNote("tcp://127.0.0.1:5711", "alert/cedar", statusShown: true);

        Assert.Contains("from tcp://127.0.0.1:5711, topics starting 'alert/cedar'.", note, StringComparison.Ordinal);
        Assert.DoesNotContain("--status", note, StringComparison.Ordinal);
    }

    private static async Task Until(Func<bool> condition, string what)
    {
        using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(30));
        while (!condition())
        {
            if (timeout.IsCancellationRequested)
            {
                throw new TimeoutException($"no {what} within 30 s");
            }

            await Task.Delay(50);
        }
    }

    /// <summary>A writer two threads can share: the listener writes, the test reads.</summary>
    private sealed class SyncWriter : TextWriter
    {
        private readonly StringBuilder _text = new();

        public override Encoding Encoding => Encoding.UTF8;

        public string Text
        {
            get
            {
                lock (_text)
                {
                    return _text.ToString();
                }
            }
        }

        public override void Write(char value)
        {
            lock (_text)
            {
                _text.Append(value);
            }
        }

        public override void Write(string? value)
        {
            lock (_text)
            {
                _text.Append(value);
            }
        }
    }
}
