using System.Globalization;
using System.Net;

namespace HumWatch.Host.Web;

/// <summary>The live page, its API, health and metrics over HTTP. Bound from config section "Web".</summary>
public sealed class WebOptions
{
    /// <summary>Config section name, "Web".</summary>
    public const string SectionName = "Web";

    /// <summary>The default endpoint, http://127.0.0.1:5712 (next to the sockets' 5710 and 5711).</summary>
    public const string DefaultEndpoint = "http://127.0.0.1:5712";

    /// <summary>Shortest access token accepted, characters.</summary>
    public const int MinTokenLength = 16;

    /// <summary>Whether `run` and `demo` serve HTTP at all. The default is true.</summary>
    public bool Enabled { get; set; } = true;

    /// <summary>http://host:port to listen on; host an IP address, localhost or *; port 0 picks a free port. The default is http://127.0.0.1:5712.</summary>
    public string Endpoint { get; set; } = DefaultEndpoint;

    /// <summary>Must be true to listen on anything but loopback, and then <see cref="AccessToken"/> or <see cref="User"/> with <see cref="PasswordHash"/> is required. The default is false.</summary>
    public bool AllowNonLoopback { get; set; }

    /// <summary>
    /// When set (at least 16 characters), every request but /healthz needs it: an "Authorization: Bearer" header, or
    /// "?token=" once in a browser (kept in a cookie). Never shown by the settings API. The default is none.
    /// </summary>
    public string AccessToken { get; set; } = string.Empty;

    /// <summary>With <see cref="PasswordHash"/>: HTTP Basic sign-in as this user. The default is none.</summary>
    public string User { get; set; } = string.Empty;

    /// <summary>"pbkdf2-sha256:ITERATIONS:SALT:HASH" (base64 salt and hash) of the user's password; see docs/http.md. The default is none.</summary>
    public string PasswordHash { get; set; } = string.Empty;

    /// <summary>A room whose data has not moved on for this long shows as silent, s; more than Publish:StatusIntervalSeconds. The default is 30 s.</summary>
    public double SilentAfterSeconds { get; set; } = 30;

    /// <summary>Pages (event streams) served at once, 1 to 10 000; further ones are refused with 503. The default is 200.</summary>
    public int MaxEventClients { get; set; } = 200;

    /// <summary>Whether a token or a user is configured.</summary>
    internal bool HasCredential => AccessToken.Length > 0 || User.Length > 0;

    /// <summary>One message per problem, each naming the configuration key; empty when valid.</summary>
    public IReadOnlyList<string> Validate(double statusIntervalSeconds, string prefix = SectionName)
    {
        var errors = new List<string>();
        if (!TryParseEndpoint(Endpoint, out var host, out _))
        {
            errors.Add($"{prefix}:Endpoint must look like {DefaultEndpoint} (http, an IP address, localhost or *, a port 0–65535) (got \"{Endpoint}\").");
        }
        else if (!IsLoopback(host))
        {
            if (!AllowNonLoopback)
            {
                errors.Add($"{prefix}:Endpoint {Endpoint} is not a loopback address; set {prefix}:AllowNonLoopback = true to serve the page beyond this machine (and an access token).");
            }
            else if (!HasCredential)
            {
                errors.Add($"{prefix}:Endpoint {Endpoint} is reachable from other hosts but no credential is set, so anyone on the network could read every room. "
                    + $"Set {prefix}:AccessToken (at least {MinTokenLength} characters), or {prefix}:User and {prefix}:PasswordHash; or use a loopback address (127.0.0.1).");
            }
        }

        if (AccessToken.Length is > 0 and < MinTokenLength)
        {
            errors.Add($"{prefix}:AccessToken must be at least {MinTokenLength} characters (got {AccessToken.Length}).");
        }

        if ((User.Length > 0) != (PasswordHash.Length > 0))
        {
            errors.Add($"{prefix}:User and {prefix}:PasswordHash go together; set both or neither.");
        }
        else if (PasswordHash.Length > 0 && !PasswordCheck.TryParse(PasswordHash, out _))
        {
            errors.Add($"{prefix}:PasswordHash must look like pbkdf2-sha256:ITERATIONS:SALT:HASH (base64 salt of at least 16 bytes, base64 hash of 32 bytes, at least {PasswordCheck.MinIterations} iterations); make one with `humwatch web-password`.");
        }

        if (!(SilentAfterSeconds >= 1 && SilentAfterSeconds <= 86_400))
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{prefix}:SilentAfterSeconds must be between 1 and 86400 s (got {SilentAfterSeconds})."));
        }
        else if (Enabled && !(SilentAfterSeconds > statusIntervalSeconds))
        {
            // Data is seen to move on with each status message; a shorter wait would call a live room silent between two.
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{prefix}:SilentAfterSeconds ({SilentAfterSeconds} s) must be longer than Publish:StatusIntervalSeconds ({statusIntervalSeconds} s): rooms are seen to receive data with each status message."));
        }

        if (MaxEventClients is < 1 or > 10_000)
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{prefix}:MaxEventClients must be between 1 and 10000 (got {MaxEventClients})."));
        }

        return errors;
    }

    /// <summary>Splits http://host:port; a missing port is invalid, port 0 picks a free one.</summary>
    internal static bool TryParseEndpoint(string? endpoint, out string host, out int port)
    {
        host = "";
        port = 0;
        const string scheme = "http://";
        if (endpoint is null || !endpoint.StartsWith(scheme, StringComparison.OrdinalIgnoreCase))
        {
            return false;
        }

        var rest = endpoint[scheme.Length..].TrimEnd('/');
        var colon = rest.LastIndexOf(':');
        if (colon <= 0 || colon == rest.Length - 1)
        {
            return false;
        }

        host = rest[..colon];
        if (host != "*" && host != "localhost" && !IPAddress.TryParse(host.Trim('[', ']'), out _))
        {
            return false;
        }

        return int.TryParse(rest[(colon + 1)..], NumberStyles.None, CultureInfo.InvariantCulture, out port) && port <= 65535;
    }

    /// <summary>True for localhost and loopback addresses (127.0.0.0/8, ::1).</summary>
    internal static bool IsLoopback(string host) =>
        host == "localhost" || (IPAddress.TryParse(host.Trim('[', ']'), out var address) && IPAddress.IsLoopback(address));
}
