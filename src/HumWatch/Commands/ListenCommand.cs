using System.CommandLine;
using System.Text;
using HumWatch.Cli.Listening;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.Cli.Commands;

/// <summary>`humwatch listen [--endpoint E] [--topic PREFIX] [--status] [--raw]`: prints what a HumWatch publishes.</summary>
internal static class ListenCommand
{
    public static Command Create()
    {
        var endpoint = new Option<string>("--endpoint") { Description = "Publisher to subscribe to.", DefaultValueFactory = _ => "tcp://127.0.0.1:5711" };
        var topic = new Option<string>("--topic") { Description = "Only topics starting with this, e.g. alert/ or clear/cedar-room.", DefaultValueFactory = _ => "" };
        var status = new Option<bool>("--status") { Description = "Also print the periodic status of each stream." };
        var raw = new Option<bool>("--raw") { Description = "Print topic and JSON body as received." };
        var command = new Command("listen", "Subscribes to a HumWatch publisher and prints alerts, clears and summaries as they come. Ctrl-C to stop.")
        {
            endpoint,
            topic,
            status,
            raw,
        };
        command.SetAction((parse, token) =>
        {
            try
            {
                return Task.FromResult(Listen(parse.GetValue(endpoint)!, parse.GetValue(topic)!, parse.GetValue(status), parse.GetValue(raw), Console.Out, Console.Error, token));
            }
            finally
            {
                // The socket is closed by now; end NetMQ's background threads so the process exits promptly.
                NetMQConfig.Cleanup(block: false);
            }
        });
        return command;
    }

    /// <summary>Subscribes and prints until cancelled. Messages go to <paramref name="output"/>; what it is waiting for, once, to <paramref name="notes"/>.</summary>
    internal static int Listen(string endpoint, string topic, bool includeStatus, bool raw, TextWriter output, TextWriter notes, CancellationToken token)
    {
        try
        {
            using var subscriber = new SubscriberSocket();
            subscriber.Options.Linger = TimeSpan.Zero;
            subscriber.Connect(endpoint);
            subscriber.Subscribe(topic);

            // A subscriber cannot tell a silent publisher from none at all, so say once what it waits for; stdout
            // stays for the messages themselves.
            notes.WriteLine(WaitingNote(endpoint, topic, includeStatus || raw));
            Pump(subscriber, includeStatus ? StatusLines.All : StatusLines.None, raw, output, token, (firstTopic, printed) =>
            {
                if (!printed)
                {
                    notes.WriteLine($"humwatch listen: receiving from {endpoint} (first message: {firstTopic}, not printed; --status shows status messages).");
                }
            });
        }
        catch (Exception ex) when (ex is NetMQException or ArgumentException)
        {
            notes.WriteLine($"humwatch listen: {endpoint}: {ex.Message}");
            return ExitCodes.BadInput;
        }

        return ExitCodes.Ok;
    }

    /// <summary>The one line said before the first message: the endpoint, the topics, and what a running HumWatch sends there.</summary>
    internal static string WaitingNote(string endpoint, string topic, bool statusShown)
    {
        var topics = topic.Length > 0 ? $"topics starting '{topic}'" : "every topic (alert/, clear/, status/, summary/)";
        var status = statusShown ? "" : " Status messages come every Publish:StatusIntervalSeconds per stream but are printed only with --status.";
        return $"humwatch listen: waiting for messages from {endpoint}, {topics}. Nothing arrives until a HumWatch ('run' or 'demo') publishes there and something happens.{status} Ctrl-C stops.";
    }

    /// <summary>Receives and prints until cancelled; also used by the demo. <paramref name="onFirst"/> hears of the first message received (its topic, and whether it was printed).</summary>
    internal static void Pump(SubscriberSocket subscriber, StatusLines status, bool raw, TextWriter output, CancellationToken token, Action<string, bool>? onFirst = null)
    {
        var frames = new List<byte[]>(2);
        var session = new PrintSession();
        var streamsSeen = new HashSet<string>(StringComparer.Ordinal);
        while (!token.IsCancellationRequested)
        {
            frames.Clear();
            try
            {
                if (!subscriber.TryReceiveMultipartBytes(TimeSpan.FromMilliseconds(250), ref frames, 2))
                {
                    continue;
                }
            }
            catch (TerminatingException)
            {
                return; // NetMQ is shutting down
            }

            if (frames.Count != 2)
            {
                output.WriteLine($"(message with {frames.Count} frames ignored)");
                continue;
            }

            var topicText = Encoding.UTF8.GetString(frames[0]);
            var isStatus = topicText.StartsWith("status/", StringComparison.Ordinal);
            var showStatus = status == StatusLines.All || (status == StatusLines.FirstPerStream && isStatus && streamsSeen.Add(topicText));
            var line = raw ? $"{topicText} {Encoding.UTF8.GetString(frames[1])}" : MessagePrinter.Format(topicText, frames[1], showStatus, session);
            if (line is not null)
            {
                output.WriteLine(line);
            }

            onFirst?.Invoke(topicText, line is not null);
            onFirst = null;
        }
    }
}

/// <summary>Which status messages become lines.</summary>
internal enum StatusLines
{
    None,
    FirstPerStream,
    All,
}
