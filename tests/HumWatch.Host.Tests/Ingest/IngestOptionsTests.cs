using HumWatch.Formats.Wire;
using HumWatch.Host.Configuration;
using HumWatch.Host.Ingest;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Options;
using Xunit;

namespace HumWatch.Host.Tests.Ingest;

public sealed class IngestOptionsTests
{
    [Fact]
    public void Defaults_are_one_pull_socket_bound_to_loopback_port_5710_with_16_MiB_limit()
    {
        var options = new IngestOptions();

        var endpoint = Assert.Single(options.EffectiveEndpoints());
        Assert.Equal("tcp://127.0.0.1:5710", endpoint.Address);
        Assert.Equal(IngestSocketMode.Bind, endpoint.Mode);
        Assert.Equal(IngestSocketType.Pull, endpoint.SocketType);
        Assert.Equal(16L * 1024 * 1024, options.MaxMessageBytes);
        Assert.Equal(256L * 1024 * 1024, options.BufferBytes);
        Assert.Equal(65_536, options.QueueCapacity);
        Assert.True(new IngestOptionsValidator().Validate(null, options).Succeeded);
    }

    [Theory]
    [InlineData("Address", "udp://127.0.0.1:5710", "Ingest:Endpoints:0:Address must be a ZeroMQ address")]
    [InlineData("Address", "tcp://127.0.0.1", "Ingest:Endpoints:0:Address must look like tcp://HOST:PORT")]
    [InlineData("Address", "tcp://127.0.0.1:70000", "Ingest:Endpoints:0:Address port must be 1–65535")]
    [InlineData("Address", "tcp://0.0.0.0:5710", "Ingest:Endpoints:0:AllowNonLoopback must be true")]
    [InlineData("Address", "tcp://*:5710", "Ingest:Endpoints:0:AllowNonLoopback must be true")]
    [InlineData("Mode", "Connect", "Ingest:Endpoints:0:Address may use port * only with Mode Bind")]
    [InlineData("SubscribePrefix", "{\"v\":1", "Ingest:Endpoints:0:SubscribePrefix applies only to SocketType Sub")]
    [InlineData("Curve:ServerKeyFile", "", "Ingest:Endpoints:0:Curve:ServerKeyFile must name")]
    [InlineData("MaxMessageBytes", "100", "Ingest:MaxMessageBytes must be between")]
    [InlineData("QueueCapacity", "0", "Ingest:QueueCapacity must be between")]
    [InlineData("BufferBytes", "1048575", "Ingest:BufferBytes must be between 1048576 (1 MiB) and 68719476736 (64 GiB); it is 1048575.")]
    [InlineData("BufferBytes", "68719476737", "Ingest:BufferBytes must be between 1048576 (1 MiB) and 68719476736 (64 GiB)")]
    [InlineData("BufferBytes", "8388608", "Ingest:BufferBytes (8388608) must be at least Ingest:MaxMessageBytes (16777216)")]
    public void Bad_setting_is_refused_with_a_message_naming_the_key(string key, string value, string expected)
    {
        var settings = new Dictionary<string, string?> { ["Ingest:Endpoints:0:Address"] = "tcp://127.0.0.1:*" };
        settings[key.StartsWith("Max", StringComparison.Ordinal) || key.StartsWith("Queue", StringComparison.Ordinal) || key.StartsWith("Buffer", StringComparison.Ordinal) ? $"Ingest:{key}" : $"Ingest:Endpoints:0:{key}"] = value;
        var ex = Assert.Throws<ConfigurationException>(() => Build(settings));

        Assert.Contains(expected, ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Configuration_binds_several_endpoints_and_explicit_non_loopback_bind_is_valid()
    {
        using var provider = Build(new Dictionary<string, string?>
        {
            ["Ingest:Endpoints:0:Address"] = "tcp://0.0.0.0:5710",
            ["Ingest:Endpoints:0:AllowNonLoopback"] = "true",
            ["Ingest:Endpoints:0:Curve:ServerKeyFile"] = "/etc/humwatch/ingest.key",
            ["Ingest:Endpoints:1:Address"] = "tcp://10.1.2.3:6000",
            ["Ingest:Endpoints:1:Mode"] = "Connect",
            ["Ingest:Endpoints:1:SocketType"] = "Sub",
            ["Ingest:Endpoints:1:SubscribePrefix"] = "{\"v\":1,\"stream\":\"ward-",
            ["Ingest:Endpoints:1:AllowInsecureRemote"] = "true", // off-host without CURVE: must be asked for by name
            ["Ingest:Endpoints:0:Curve:AllowedClientKeysFile"] = "/etc/humwatch/senders.keys",
            ["Ingest:QueueCapacity"] = "64",
            ["Ingest:BufferBytes"] = "33554432",
        });

        var options = provider.GetRequiredService<IOptions<IngestOptions>>().Value;

        Assert.Equal(2, options.Endpoints.Count);
        Assert.True(options.Endpoints[0].AllowNonLoopback);
        Assert.Equal("/etc/humwatch/ingest.key", options.Endpoints[0].Curve!.ServerKeyFile);
        Assert.Equal("/etc/humwatch/senders.keys", options.Endpoints[0].Curve!.AllowedClientKeysFile);
        Assert.False(options.Endpoints[0].AllowInsecureRemote);
        Assert.True(options.Endpoints[1].AllowInsecureRemote);
        Assert.Equal(IngestSocketType.Sub, options.Endpoints[1].SocketType);
        Assert.Equal(IngestSocketMode.Connect, options.Endpoints[1].Mode);
        Assert.Equal(64, provider.GetRequiredService<IngestQueue>().Capacity);
        Assert.Equal(32L * 1024 * 1024, provider.GetRequiredService<SampleBufferPool>().BudgetBytes);
    }

    [Theory]
    [InlineData("tcp://0.0.0.0:5710", "Bind")]
    [InlineData("tcp://*:5710", "Bind")]
    [InlineData("tcp://192.168.1.20:5710", "Bind")]
    [InlineData("tcp://192.0.2.7:6000", "Connect")]
    [InlineData("tcp://sender-host:6000", "Connect")]
    public void An_off_host_endpoint_without_CURVE_keys_is_refused_naming_the_endpoint_the_key_setting_and_the_insecure_flag(string address, string mode)
    {
        var settings = new Dictionary<string, string?>
        {
            ["Ingest:Endpoints:0:Address"] = address,
            ["Ingest:Endpoints:0:Mode"] = mode,
            ["Ingest:Endpoints:0:AllowNonLoopback"] = "true",
        };

        var ex = Assert.Throws<ConfigurationException>(() => Build(settings));

        Assert.Contains($"Ingest:Endpoints:0:Address '{address}' is reachable from other hosts but has no CURVE keys", ex.Message, StringComparison.Ordinal);
        Assert.Contains("Set Ingest:Endpoints:0:Curve:ServerKeyFile", ex.Message, StringComparison.Ordinal);
        Assert.Contains("Ingest:Endpoints:0:AllowInsecureRemote = true", ex.Message, StringComparison.Ordinal);

        settings["Ingest:Endpoints:0:AllowInsecureRemote"] = "true";
        using var accepted = Build(settings);
        Assert.True(accepted.GetRequiredService<IOptions<IngestOptions>>().Value.Endpoints[0].AllowInsecureRemote);

        settings.Remove("Ingest:Endpoints:0:AllowInsecureRemote");
        settings["Ingest:Endpoints:0:Curve:ServerKeyFile"] = "/etc/humwatch/ingest.key";
        using var encrypted = Build(settings);
        Assert.NotNull(encrypted.GetRequiredService<IOptions<IngestOptions>>().Value.Endpoints[0].Curve);
    }

    [Theory]
    [InlineData("tcp://127.0.0.1:5710")]
    [InlineData("tcp://127.8.9.10:5710")]
    [InlineData("tcp://localhost:5710")]
    [InlineData("tcp://[::1]:5710")]
    [InlineData("ipc:///tmp/humwatch-ingest.sock")]
    [InlineData("inproc://humwatch-ingest")]
    public void Loopback_and_local_transports_need_no_keys_and_no_flag(string address) =>
        Assert.True(new IngestOptionsValidator().Validate(null, WithEndpoint(address)).Succeeded);

    [Fact]
    public void A_buffer_budget_equal_to_the_message_limit_is_valid()
    {
        var options = new IngestOptions { MaxMessageBytes = 4L * 1024 * 1024, BufferBytes = 4L * 1024 * 1024 };

        Assert.True(new IngestOptionsValidator().Validate(null, options).Succeeded);
    }

    [Theory]
    [InlineData("tcp://127.0.0.1:5710", true)]
    [InlineData("tcp://127.3.2.1:5710", true)]
    [InlineData("tcp://localhost:5710", true)]
    [InlineData("tcp://[::1]:5710", true)]
    [InlineData("ipc:///tmp/humwatch.sock", true)]
    [InlineData("tcp://0.0.0.0:5710", false)]
    [InlineData("tcp://*:5710", false)]
    [InlineData("tcp://192.168.1.20:5710", false)]
    [InlineData("tcp://eth0:5710", false)]
    public void Loopback_addresses_are_recognised(string address, bool localOnly) => // RFC 1122 §3.2.1.3: 127/8 is loopback; RFC 4291 §2.5.3: ::1
        Assert.Equal(localOnly, IngestOptionsValidator.IsLocalOnly(address));

    [Fact]
    public void A_misspelt_ingest_key_is_refused_with_its_name()
    {
        var ex = Assert.Throws<ConfigurationException>(() => Build(new Dictionary<string, string?> { ["Ingest:QueueCapasity"] = "64" }));

        Assert.Contains("Ingest", ex.Message, StringComparison.Ordinal);
        Assert.Contains("QueueCapasity", ex.Message, StringComparison.Ordinal);
    }

    private static IngestOptions WithEndpoint(string address)
    {
        var options = new IngestOptions();
        options.Endpoints.Add(new IngestEndpointOptions { Address = address });
        return options;
    }

    private static ServiceProvider Build(Dictionary<string, string?> settings)
    {
        var bound = SettingsBuilder.Build(SettingsSources.Isolated(settings));
        var services = new ServiceCollection();
        services.AddLogging();
        services.AddHumWatchIngest(bound.Ingest);
        return services.BuildServiceProvider();
    }
}
