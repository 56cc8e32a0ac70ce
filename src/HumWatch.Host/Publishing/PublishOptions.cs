using System.Globalization;
using System.Net;

namespace HumWatch.Host.Publishing;

/// <summary>Where and how alerts, clears, status and summaries are published. Bound from config section "Publish".</summary>
public sealed class PublishOptions
{
    /// <summary>ZeroMQ PUB endpoint to bind, tcp://host:port; port 0 or * picks a free port. The default is tcp://127.0.0.1:5711.</summary>
    public string Endpoint { get; set; } = "tcp://127.0.0.1:5711";

    /// <summary>Binding to anything but loopback must be asked for explicitly (a warning is logged). The default is false.</summary>
    public bool AllowNonLoopback { get; set; }

    /// <summary>
    /// Must be true to bind a non-loopback address (including * and 0.0.0.0) without <see cref="Curve"/>: messages then
    /// go out unencrypted to any subscriber that reaches the port. Logged as a warning. The default is false.
    /// </summary>
    public bool AllowInsecureRemote { get; set; }

    /// <summary>Optional CurveZMQ encryption of the PUB socket (HumWatch is the CURVE server); null (the default) means plain TCP.</summary>
    public PublishCurveOptions? Curve { get; set; }

    /// <summary>Seconds between status messages per stream. The default is 10 s.</summary>
    public double StatusIntervalSeconds { get; set; } = 10;

    /// <summary>How long unsent messages are kept for slow subscribers when the publisher closes, ms. The default is 1000 ms.</summary>
    public int LingerMs { get; set; } = 1000;

    /// <summary>Messages ZeroMQ queues per subscriber before it drops for that subscriber. The default is 10000.</summary>
    public int SendHighWaterMark { get; set; } = 10_000;

    /// <summary>Messages waiting for the publisher thread before new ones are dropped (and counted). The default is 10000.</summary>
    public int MaxQueuedMessages { get; set; } = 10_000;

    /// <summary>One message per problem, each naming the configuration key; empty when valid.</summary>
    public IReadOnlyList<string> Validate(string prefix = "Publish")
    {
        var errors = new List<string>();
        if (!TryParseEndpoint(Endpoint, out var host, out _))
        {
            errors.Add($"{prefix}:Endpoint must look like tcp://127.0.0.1:5711 (tcp, an IP address, localhost or *, a port 0–65535 or *) (got \"{Endpoint}\").");
        }
        else if (!IsLoopback(host) && !AllowNonLoopback)
        {
            errors.Add($"{prefix}:Endpoint {Endpoint} is not a loopback address; set {prefix}:AllowNonLoopback = true to publish beyond this machine.");
        }

        if (TryParseEndpoint(Endpoint, out var remoteHost, out _) && !IsLoopback(remoteHost) && Curve is null && !AllowInsecureRemote)
        {
            errors.Add(Security.RemoteEndpointRule.Refusal($"{prefix}:Endpoint", Endpoint, $"{prefix}:Curve:ServerKeyFile", $"{prefix}:AllowInsecureRemote"));
        }

        if (Curve is not null && string.IsNullOrWhiteSpace(Curve.ServerKeyFile))
        {
            errors.Add($"{prefix}:Curve:ServerKeyFile must name the server key pair file (JSON with publicKey and secretKey in Z85).");
        }

        if (!(StatusIntervalSeconds >= 1 && StatusIntervalSeconds <= 3600))
        {
            errors.Add($"{prefix}:StatusIntervalSeconds must be between 1 and 3600 s (got {StatusIntervalSeconds}).");
        }

        if (LingerMs is < 0 or > 60_000)
        {
            errors.Add($"{prefix}:LingerMs must be between 0 and 60000 ms (got {LingerMs}).");
        }

        if (SendHighWaterMark is < 1 or > 10_000_000)
        {
            errors.Add($"{prefix}:SendHighWaterMark must be between 1 and 10000000 (got {SendHighWaterMark}).");
        }

        if (MaxQueuedMessages is < 1 or > 10_000_000)
        {
            errors.Add($"{prefix}:MaxQueuedMessages must be between 1 and 10000000 (got {MaxQueuedMessages}).");
        }

        return errors;
    }

    /// <summary>Splits tcp://host:port; port is null for "*" or 0 (pick a free port).</summary>
    internal static bool TryParseEndpoint(string? endpoint, out string host, out int? port)
    {
        host = "";
        port = null;
        const string scheme = "tcp://";
        if (endpoint is null || !endpoint.StartsWith(scheme, StringComparison.Ordinal))
        {
            return false;
        }

        var rest = endpoint[scheme.Length..];
        var colon = rest.LastIndexOf(':');
        if (colon <= 0 || colon == rest.Length - 1)
        {
            return false;
        }

        host = rest[..colon];
        var portText = rest[(colon + 1)..];
        if (host != "*" && host != "localhost" && !IPAddress.TryParse(host.Trim('[', ']'), out _))
        {
            return false;
        }

        if (portText == "*")
        {
            return true;
        }

        if (!int.TryParse(portText, NumberStyles.None, CultureInfo.InvariantCulture, out var number) || number > 65535)
        {
            return false;
        }

        port = number == 0 ? null : number;
        return true;
    }

    /// <summary>True for localhost and loopback addresses (127.0.0.0/8, ::1).</summary>
    internal static bool IsLoopback(string host) =>
        host == "localhost" || (IPAddress.TryParse(host.Trim('[', ']'), out var address) && IPAddress.IsLoopback(address));
}

/// <summary>CurveZMQ settings of the publisher, which acts as the CURVE server; subscribers need its public key.</summary>
public sealed class PublishCurveOptions
{
    /// <summary>Path of the server key pair file (JSON with Z85 "publicKey" and "secretKey"; mode 600 on Unix).</summary>
    public string ServerKeyFile { get; set; } = string.Empty;
}
