using System.Globalization;
using System.Net;
using HumWatch.Formats.Wire;
using Microsoft.Extensions.Options;

namespace HumWatch.Host.Ingest;

/// <summary>Checks <see cref="IngestOptions"/> at start; every message names the configuration key.</summary>
internal sealed class IngestOptionsValidator : IValidateOptions<IngestOptions>
{
    private const string Section = IngestOptions.SectionName;

    public ValidateOptionsResult Validate(string? name, IngestOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        var failures = new List<string>();
        if (options.MaxMessageBytes is < 1024 or > 1L << 30)
        {
            failures.Add($"{Section}:MaxMessageBytes must be between 1024 (1 KiB) and 1073741824 (1 GiB); it is {options.MaxMessageBytes}.");
        }

        if (options.QueueCapacity is < 1 or > 1_000_000)
        {
            failures.Add($"{Section}:QueueCapacity must be between 1 and 1000000 chunks; it is {options.QueueCapacity}.");
        }

        if (options.BufferBytes is < 1L << 20 or > 1L << 36)
        {
            failures.Add($"{Section}:BufferBytes must be between 1048576 (1 MiB) and 68719476736 (64 GiB); it is {options.BufferBytes}.");
        }
        else if (options.BufferBytes < options.MaxMessageBytes)
        {
            failures.Add($"{Section}:BufferBytes ({options.BufferBytes}) must be at least {Section}:MaxMessageBytes ({options.MaxMessageBytes}), or the largest allowed chunk could never be held.");
        }

        if (options.WarningInterval < TimeSpan.Zero || options.WarningInterval > TimeSpan.FromHours(1))
        {
            failures.Add($"{Section}:WarningInterval must be between 00:00:00 and 01:00:00; it is {options.WarningInterval}.");
        }

        if (options.MaxWarningsPerInterval is < 1 or > 10_000)
        {
            failures.Add($"{Section}:MaxWarningsPerInterval must be between 1 and 10000; it is {options.MaxWarningsPerInterval}.");
        }

        if (options.MaxChannels is < 1 or > ChunkWireCodec.MaxChannels)
        {
            failures.Add($"{Section}:MaxChannels must be between 1 and {ChunkWireCodec.MaxChannels} (the protocol's limit); it is {options.MaxChannels}.");
        }

        if (!(options.MaxSampleRateHz >= 1 && options.MaxSampleRateHz <= ChunkWireCodec.MaxSampleRateHz))
        {
            failures.Add($"{Section}:MaxSampleRateHz must be between 1 and 1000000 Hz (the protocol's limit); it is {options.MaxSampleRateHz.ToString(CultureInfo.InvariantCulture)}.");
        }

        if (options.MaxChunkSamples is < 1 or > 1 << 24)
        {
            failures.Add($"{Section}:MaxChunkSamples must be between 1 and 16777216 samples per channel; it is {options.MaxChunkSamples}.");
        }

        if (options.MaxHeaderBytes is < 256 or > 1 << 20)
        {
            failures.Add($"{Section}:MaxHeaderBytes must be between 256 and 1048576 (1 MiB); it is {options.MaxHeaderBytes}.");
        }
        else if (options.MaxHeaderBytes > options.MaxMessageBytes)
        {
            failures.Add($"{Section}:MaxHeaderBytes ({options.MaxHeaderBytes}) must not exceed {Section}:MaxMessageBytes ({options.MaxMessageBytes}).");
        }

        if (!(options.RateAllowance >= 1 && options.RateAllowance <= 100))
        {
            failures.Add($"{Section}:RateAllowance must be between 1 and 100 (times the declared rate); it is {options.RateAllowance.ToString(CultureInfo.InvariantCulture)}.");
        }

        if (!(options.RateBurstSeconds >= 1 && options.RateBurstSeconds <= 3600))
        {
            failures.Add($"{Section}:RateBurstSeconds must be between 1 and 3600 s; it is {options.RateBurstSeconds.ToString(CultureInfo.InvariantCulture)}.");
        }

        if (options.ReceiveHighWatermark is < 1 or > 100_000)
        {
            failures.Add($"{Section}:ReceiveHighWatermark must be between 1 and 100000 messages; it is {options.ReceiveHighWatermark}.");
        }

        var bound = new HashSet<string>(StringComparer.OrdinalIgnoreCase);
        for (var i = 0; i < options.Endpoints.Count; i++)
        {
            var endpoint = options.Endpoints[i];
            var key = $"{Section}:Endpoints:{i}";
            if (endpoint is null)
            {
                failures.Add($"{key} is empty.");
                continue;
            }

            ValidateEndpoint(endpoint, key, failures);
            if (endpoint.Mode == IngestSocketMode.Bind && !endpoint.Address.EndsWith(":*", StringComparison.Ordinal) && !bound.Add(endpoint.Address))
            {
                failures.Add($"{key}:Address binds {endpoint.Address}, which an earlier endpoint already binds.");
            }
        }

        return failures.Count == 0 ? ValidateOptionsResult.Success : ValidateOptionsResult.Fail(failures);
    }

    /// <summary>True for tcp addresses on 127.0.0.0/8, ::1, localhost or the loopback interface, and for ipc/inproc.</summary>
    internal static bool IsLocalOnly(string address)
    {
        if (!TrySplitTcp(address, out var host, out _))
        {
            return address.StartsWith("ipc://", StringComparison.Ordinal) || address.StartsWith("inproc://", StringComparison.Ordinal);
        }

        if (host is "localhost" or "lo")
        {
            return true;
        }

        return IPAddress.TryParse(host.Trim('[', ']'), out var ip) && IPAddress.IsLoopback(ip);
    }

    private static void ValidateEndpoint(IngestEndpointOptions endpoint, string key, List<string> failures)
    {
        var address = endpoint.Address ?? string.Empty;
        if (address.StartsWith("tcp://", StringComparison.Ordinal))
        {
            if (!TrySplitTcp(address, out var host, out var port) || host.Length == 0)
            {
                failures.Add($"{key}:Address must look like tcp://HOST:PORT (e.g. {IngestOptions.DefaultAddress}); it is '{address}'.");
                return;
            }

            if (port == "*")
            {
                if (endpoint.Mode != IngestSocketMode.Bind)
                {
                    failures.Add($"{key}:Address may use port * only with Mode Bind; it is '{address}'.");
                }
            }
            else if (!int.TryParse(port, NumberStyles.None, CultureInfo.InvariantCulture, out var portNumber) || portNumber is < 1 or > 65535)
            {
                failures.Add($"{key}:Address port must be 1–65535 or *; it is '{address}'.");
            }

            if (endpoint.Mode == IngestSocketMode.Bind && !IsLocalOnly(address) && !endpoint.AllowNonLoopback)
            {
                failures.Add($"{key}:AllowNonLoopback must be true to bind to the non-loopback address '{address}' (other hosts could send data); or bind to 127.0.0.1.");
            }

            if (!IsLocalOnly(address) && endpoint.Curve is null && !endpoint.AllowInsecureRemote)
            {
                failures.Add(Security.RemoteEndpointRule.Refusal($"{key}:Address", address, $"{key}:Curve:ServerKeyFile", $"{key}:AllowInsecureRemote"));
            }
        }
        else if (!(address.StartsWith("ipc://", StringComparison.Ordinal) || address.StartsWith("inproc://", StringComparison.Ordinal)) || address.IndexOf("//", StringComparison.Ordinal) + 2 == address.Length)
        {
            failures.Add($"{key}:Address must be a ZeroMQ address tcp://HOST:PORT, ipc://PATH or inproc://NAME; it is '{address}'.");
        }

        if (!Enum.IsDefined(endpoint.Mode))
        {
            failures.Add($"{key}:Mode must be Bind or Connect.");
        }

        if (!Enum.IsDefined(endpoint.SocketType))
        {
            failures.Add($"{key}:SocketType must be Pull or Sub.");
        }

        if (endpoint.SocketType != IngestSocketType.Sub && !string.IsNullOrEmpty(endpoint.SubscribePrefix))
        {
            failures.Add($"{key}:SubscribePrefix applies only to SocketType Sub; remove it or set SocketType to Sub.");
        }

        if (endpoint.Curve is not null && string.IsNullOrWhiteSpace(endpoint.Curve.ServerKeyFile))
        {
            failures.Add($"{key}:Curve:ServerKeyFile must name the server key pair file (JSON with publicKey and secretKey in Z85).");
        }
    }

    private static bool TrySplitTcp(string address, out string host, out string port)
    {
        host = string.Empty;
        port = string.Empty;
        if (!address.StartsWith("tcp://", StringComparison.Ordinal))
        {
            return false;
        }

        var rest = address["tcp://".Length..];
        var colon = rest.LastIndexOf(':');
        if (colon < 0)
        {
            return false;
        }

        host = rest[..colon];
        port = rest[(colon + 1)..];

        // "tcp://eth0;192.168.1.2:5710" names a source interface for connect; the host is the part after ';'.
        var semicolon = host.LastIndexOf(';');
        if (semicolon >= 0)
        {
            host = host[(semicolon + 1)..];
        }

        return true;
    }
}
