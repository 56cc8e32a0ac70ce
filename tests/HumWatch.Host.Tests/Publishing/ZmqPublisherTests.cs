using System.Text;
using System.Text.Json;
using HumWatch.Host.Publishing;
using HumWatch.Host.Tests.Publishing.Support;
using Microsoft.Extensions.Logging;
using NetMQ;
using NetMQ.Sockets;
using Xunit;

namespace HumWatch.Host.Tests.Publishing;

public sealed class ZmqPublisherTests
{
    private static readonly TimeSpan ReceiveTimeout = TimeSpan.FromMilliseconds(100);

    private static ZmqPublisher NewPublisher(RecordingLogger<ZmqPublisher> logger) =>
        new(new PublishOptions { Endpoint = "tcp://127.0.0.1:0", LingerMs = 0 }, logger);

    private static (string Topic, byte[] Body)? TryReceive(SubscriberSocket subscriber)
    {
        if (!subscriber.TryReceiveFrameString(ReceiveTimeout, out var topic, out var more) || !more)
        {
            return null;
        }

        return subscriber.TryReceiveFrameBytes(TimeSpan.FromSeconds(5), out var body) ? (topic, body) : null;
    }

    /// <summary>
    /// The next message that is not a subscription probe, waiting up to 50 receive timeouts: on a loaded machine a late
    /// probe can still be queued ahead of it.
    /// </summary>
    private static (string Topic, byte[] Body)? ReceiveSkippingProbes(SubscriberSocket subscriber)
    {
        for (var attempt = 0; attempt < 50; attempt++)
        {
            if (TryReceive(subscriber) is { } received && received.Topic != "status/probe")
            {
                return received;
            }
        }

        return null;
    }

    /// <summary>PUB drops until the subscription has reached it (ZeroMQ guide's slow joiner, from memory): probe a bounded number of times.</summary>
    private static void WaitUntilSubscribed(ZmqPublisher publisher, SubscriberSocket subscriber)
    {
        var probe = Messages.For(new StatusMessage(1, "probe", Some.Utc, 0, 0, 0, 0, 0, 0, null));
        for (var attempt = 0; attempt < 100; attempt++)
        {
            publisher.TryPublish(Messages.StatusKind, "probe", probe);
            if (TryReceive(subscriber) is { Topic: "status/probe" })
            {
                while (TryReceive(subscriber) is not null)
                {
                    // Drain the remaining probes.
                }

                return;
            }
        }

        Assert.Fail("Subscriber never received a probe from the publisher.");
    }

    [Fact]
    public void Alert_is_received_by_a_loopback_subscriber_as_topic_and_json_body()
    {
        var logger = new RecordingLogger<ZmqPublisher>();
        using var publisher = NewPublisher(logger);
        Assert.StartsWith("tcp://127.0.0.1:", publisher.Endpoint, StringComparison.Ordinal);
        Assert.DoesNotContain(":0", publisher.Endpoint[16..], StringComparison.Ordinal);

        using var subscriber = new SubscriberSocket();
        subscriber.Options.Linger = TimeSpan.Zero;
        subscriber.Connect(publisher.Endpoint);
        subscriber.Subscribe("");
        WaitUntilSubscribed(publisher, subscriber);

        var (kind, body) = Messages.For(Some.Raised());
        Assert.True(publisher.TryPublish(kind, "room-a", body));

        var received = ReceiveSkippingProbes(subscriber);
        Assert.NotNull(received);
        Assert.Equal("alert/room-a", received.Value.Topic);
        using var json = JsonDocument.Parse(received.Value.Body);
        Assert.Equal(1, json.RootElement.GetProperty("v").GetInt32());
        Assert.Equal("mains/h1", json.RootElement.GetProperty("key").GetString());
        Assert.Equal("raised", json.RootElement.GetProperty("event").GetString());
        Assert.Contains(logger.Entries, e => e.EventId.Id == 3020);
    }

    [Fact]
    public void Publishing_after_dispose_returns_false_without_throwing()
    {
        var logger = new RecordingLogger<ZmqPublisher>();
        var publisher = NewPublisher(logger);
        publisher.Dispose();
        publisher.Dispose();

        Assert.False(publisher.TryPublish("alert", "room-a", Encoding.UTF8.GetBytes("{\"v\":1}")));
        Assert.Equal(1, publisher.DroppedCount);
        Assert.Contains(logger.Entries, e => e.EventId.Id == 3024 && e.Level == LogLevel.Warning);
    }

    [Fact]
    public void Bad_arguments_are_dropped_and_logged_not_thrown()
    {
        var logger = new RecordingLogger<ZmqPublisher>();
        using var publisher = NewPublisher(logger);
        Assert.False(publisher.TryPublish("alert", "", []));
        Assert.Contains(logger.Entries, e => e.Level == LogLevel.Error);
    }

    [Fact]
    public void An_endpoint_in_use_gives_an_error_naming_it()
    {
        using var first = NewPublisher(new RecordingLogger<ZmqPublisher>());
        var options = new PublishOptions { Endpoint = first.Endpoint, LingerMs = 0 };
        var ex = Assert.Throws<StartFailureException>(() => new ZmqPublisher(options, new RecordingLogger<ZmqPublisher>()));
        Assert.StartsWith($"{first.Endpoint} is already in use (Publish:Endpoint). Another HumWatch", ex.Message, StringComparison.Ordinal);
        Assert.Contains("--set Publish:Endpoint=tcp://127.0.0.1:", ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("tcp://127.0.0.1:5711", false, true)]
    [InlineData("tcp://localhost:0", false, true)]
    [InlineData("tcp://[::1]:*", false, true)]
    [InlineData("tcp://*:5711", false, false)]
    [InlineData("tcp://*:5711", true, true)]
    [InlineData("tcp://192.0.2.10:5711", false, false)]
    [InlineData("udp://127.0.0.1:5711", false, false)]
    [InlineData("tcp://127.0.0.1", false, false)]
    [InlineData("tcp://127.0.0.1:70000", false, false)]
    [InlineData("tcp://not a host:1", true, false)]
    public void Endpoint_validation_keeps_loopback_unless_told_otherwise(string endpoint, bool allowNonLoopback, bool valid)
    {
        // Off-host without CURVE also needs the insecure flag (see the test below); here both come together.
        var errors = new PublishOptions { Endpoint = endpoint, AllowNonLoopback = allowNonLoopback, AllowInsecureRemote = allowNonLoopback }.Validate();
        Assert.Equal(valid, errors.Count == 0);
        Assert.All(errors, e => Assert.StartsWith("Publish:Endpoint", e, StringComparison.Ordinal));
    }

    [Theory]
    [InlineData("tcp://*:5711")]
    [InlineData("tcp://0.0.0.0:5711")]
    [InlineData("tcp://192.0.2.10:0")]
    public void Publishing_off_host_without_CURVE_keys_needs_the_insecure_flag_by_name(string endpoint)
    {
        var refused = new PublishOptions { Endpoint = endpoint, AllowNonLoopback = true }.Validate();

        var error = Assert.Single(refused);
        Assert.StartsWith($"Publish:Endpoint '{endpoint}' is reachable from other hosts but has no CURVE keys", error, StringComparison.Ordinal);
        Assert.Contains("Publish:Curve:ServerKeyFile", error, StringComparison.Ordinal);
        Assert.Contains("Publish:AllowInsecureRemote = true", error, StringComparison.Ordinal);
        Assert.Empty(new PublishOptions { Endpoint = endpoint, AllowNonLoopback = true, AllowInsecureRemote = true }.Validate());
        Assert.Empty(new PublishOptions { Endpoint = endpoint, AllowNonLoopback = true, Curve = new PublishCurveOptions { ServerKeyFile = "/etc/humwatch/publish.key" } }.Validate());
        Assert.Contains(
            new PublishOptions { Endpoint = endpoint, AllowNonLoopback = true, Curve = new PublishCurveOptions() }.Validate(),
            e => e.StartsWith("Publish:Curve:ServerKeyFile must name", StringComparison.Ordinal));
    }

    [Fact]
    public void A_CURVE_publisher_delivers_to_a_subscriber_holding_its_public_key_and_refuses_a_key_file_readable_by_others()
    {
        using var temp = new TempFolder();
        var keyFile = Path.Combine(temp.Path, "publish.key");
        var server = HumWatch.Host.Security.CurveKeyFile.Create(keyFile);
        var logger = new RecordingLogger<ZmqPublisher>();
        using (var publisher = new ZmqPublisher(new PublishOptions { Endpoint = "tcp://127.0.0.1:0", LingerMs = 0, Curve = new PublishCurveOptions { ServerKeyFile = keyFile } }, logger))
        using (var subscriber = new SubscriberSocket())
        {
            subscriber.Options.CurveServerKey = server.PublicKey;
            subscriber.Options.CurveCertificate = new NetMQCertificate();
            subscriber.Connect(publisher.Endpoint);
            subscriber.Subscribe("");

            // PUB drops messages until the subscription arrives (ZeroMQ's slow joiner); probe until one gets through.
            (string Topic, byte[] Body)? received = null;
            for (var attempt = 0; attempt < 100 && received is null; attempt++)
            {
                publisher.TryPublish("status", "probe", [1]);
                received = TryReceive(subscriber);
            }

            Assert.Equal("status/probe", received?.Topic);
        }

        Assert.DoesNotContain(logger.Entries, e => e.Level == LogLevel.Warning);
        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(keyFile, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.GroupRead | UnixFileMode.OtherRead);
            var ex = Assert.Throws<StartFailureException>(() => new ZmqPublisher(new PublishOptions { Endpoint = "tcp://127.0.0.1:0", Curve = new PublishCurveOptions { ServerKeyFile = keyFile } }, logger));
            Assert.StartsWith("Publish:Curve:ServerKeyFile: ", ex.Message, StringComparison.Ordinal);
            Assert.Contains("mode 0644", ex.Message, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void Defaults_are_valid_and_other_keys_are_named()
    {
        var defaults = new PublishOptions();
        Assert.Empty(defaults.Validate());
        Assert.Equal("tcp://127.0.0.1:5711", defaults.Endpoint);
        Assert.Equal(10, defaults.StatusIntervalSeconds);

        var errors = new PublishOptions { StatusIntervalSeconds = 0, LingerMs = -1, MaxQueuedMessages = 0 }.Validate();
        Assert.Contains(errors, e => e.StartsWith("Publish:StatusIntervalSeconds", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Publish:LingerMs", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Publish:MaxQueuedMessages", StringComparison.Ordinal));
    }
}
