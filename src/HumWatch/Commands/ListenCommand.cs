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
        command.SetAction((parse, token) => Task.FromResult(Listen(parse.GetValue(endpoint)!, parse.GetValue(topic)!, parse.GetValue(status), parse.GetValue(raw), Console.Out, token)));
        return command;
    }

    internal static int Listen(string endpoint, string topic, bool includeStatus, bool raw, TextWriter output, CancellationToken token)
    {
        try
        {
            using var subscriber = new SubscriberSocket();
            subscriber.Options.Linger = TimeSpan.Zero;
            subscriber.Connect(endpoint);
            subscriber.Subscribe(topic);
            output.WriteLine($"listening to {endpoint}{(topic.Length > 0 ? $" (topics {topic}*)" : "")}; Ctrl-C to stop");
            Pump(subscriber, includeStatus ? StatusLines.All : StatusLines.None, raw, output, token);
        }
        catch (Exception ex) when (ex is NetMQException or ArgumentException)
        {
            Console.Error.WriteLine($"humwatch listen: {endpoint}: {ex.Message}");
            return ExitCodes.BadInput;
        }
        finally
        {
            NetMQConfig.Cleanup(block: false);
        }

        return ExitCodes.Ok;
    }

    /// <summary>Receives and prints until cancelled; also used by the demo.</summary>
    internal static void Pump(SubscriberSocket subscriber, StatusLines status, bool raw, TextWriter output, CancellationToken token)
    {
        var frames = new List<byte[]>(2);
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
            var line = raw ? $"{topicText} {Encoding.UTF8.GetString(frames[1])}" : MessagePrinter.Format(topicText, frames[1], showStatus);
            if (line is not null)
            {
                output.WriteLine(line);
            }
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
