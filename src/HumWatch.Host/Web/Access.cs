using System.Collections.Concurrent;
using System.Security.Cryptography;
using System.Text;
using Microsoft.AspNetCore.Http;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Web;

/// <summary>
/// Who may read: everyone when no credential is configured (loopback only, by validation); otherwise a request needs the
/// access token (Authorization: Bearer, or ?token= once, which sets a cookie) or the configured user and password
/// (HTTP Basic). /healthz stays open, so a supervisor can see the process is alive. Everything is read-only anyway.
/// </summary>
internal sealed class Access
{
    /// <summary>The cookie a browser keeps after "?token=": a hash of the token, not the token itself.</summary>
    public const string CookieName = "humwatch-access";

    private const int MaxRememberedLogins = 32;

    private readonly WebOptions _options;
    private readonly ILogger _logger;
    private readonly byte[]? _tokenHash;
    private readonly string? _cookieValue;

    // PBKDF2 is slow on purpose; a page makes several requests, so a login that verified once is remembered (by hash).
    private readonly ConcurrentDictionary<string, bool> _goodLogins = new(StringComparer.Ordinal);

    public Access(WebOptions options, ILogger logger)
    {
        _options = options;
        _logger = logger;
        if (options.AccessToken.Length > 0)
        {
            _tokenHash = SHA256.HashData(Encoding.UTF8.GetBytes(options.AccessToken));
            _cookieValue = Convert.ToBase64String(SHA256.HashData(Encoding.UTF8.GetBytes("humwatch-cookie:" + options.AccessToken)))
                .TrimEnd('=').Replace('+', '-').Replace('/', '_');
        }
    }

    /// <summary>The middleware: lets the request through, or answers 401 (or redirects after a good ?token=).</summary>
    public async Task Handle(HttpContext context, RequestDelegate next)
    {
        // The health probe and the stylesheet carry no data.
        if (!_options.HasCredential || context.Request.Path == "/healthz" || context.Request.Path == "/style.css")
        {
            await next(context);
            return;
        }

        if (context.Request.Query.TryGetValue("token", out var queryToken) && IsToken(queryToken.ToString()))
        {
            // Keep it in a cookie and drop it from the address, so it is not left in the address bar or in bookmarks.
            context.Response.Cookies.Append(CookieName, _cookieValue!, new CookieOptions
            {
                HttpOnly = true,
                SameSite = SameSiteMode.Strict,
                Secure = context.Request.IsHttps,
                Path = "/",
            });
            var rest = context.Request.Query.Where(q => q.Key != "token").Select(q => $"{Uri.EscapeDataString(q.Key)}={Uri.EscapeDataString(q.Value.ToString())}");
            var query = string.Join('&', rest);
            context.Response.Redirect(context.Request.PathBase + context.Request.Path + (query.Length > 0 ? "?" + query : ""));
            return;
        }

        if (IsAllowed(context.Request))
        {
            await next(context);
            return;
        }

        _logger.Unauthorized(context.Request.Method, context.Request.Path, context.Connection.RemoteIpAddress?.ToString() ?? "?");
        context.Response.StatusCode = StatusCodes.Status401Unauthorized;
        if (_options.User.Length > 0)
        {
            context.Response.Headers.WWWAuthenticate = "Basic realm=\"HumWatch\", charset=\"UTF-8\"";
        }

        if (context.Request.Headers.Accept.ToString().Contains("text/html", StringComparison.OrdinalIgnoreCase))
        {
            context.Response.ContentType = "text/html; charset=utf-8";
            await context.Response.WriteAsync(SignInPage);
        }
        else
        {
            context.Response.ContentType = "application/json; charset=utf-8";
            await context.Response.WriteAsync("{\"error\":\"this HumWatch needs its access token (Authorization: Bearer) or its user and password\"}");
        }
    }

    private bool IsAllowed(HttpRequest request)
    {
        var authorization = request.Headers.Authorization.ToString();
        if (authorization.StartsWith("Bearer ", StringComparison.OrdinalIgnoreCase))
        {
            return IsToken(authorization["Bearer ".Length..].Trim());
        }

        if (authorization.StartsWith("Basic ", StringComparison.OrdinalIgnoreCase))
        {
            return IsLogin(authorization["Basic ".Length..].Trim());
        }

        return _cookieValue is not null && request.Cookies.TryGetValue(CookieName, out var cookie)
            && CryptographicOperations.FixedTimeEquals(Encoding.ASCII.GetBytes(cookie ?? ""), Encoding.ASCII.GetBytes(_cookieValue));
    }

    private bool IsToken(string candidate) =>
        _tokenHash is not null && CryptographicOperations.FixedTimeEquals(SHA256.HashData(Encoding.UTF8.GetBytes(candidate)), _tokenHash);

    private bool IsLogin(string base64)
    {
        if (_options.User.Length == 0)
        {
            return false;
        }

        string text;
        try
        {
            text = Encoding.UTF8.GetString(Convert.FromBase64String(base64));
        }
        catch (FormatException)
        {
            return false;
        }

        var colon = text.IndexOf(':', StringComparison.Ordinal);
        if (colon < 0)
        {
            return false;
        }

        var remembered = Convert.ToBase64String(SHA256.HashData(Encoding.UTF8.GetBytes(text)));
        if (_goodLogins.ContainsKey(remembered))
        {
            return true;
        }

        var user = text[..colon];
        var userMatches = CryptographicOperations.FixedTimeEquals(Encoding.UTF8.GetBytes(user), Encoding.UTF8.GetBytes(_options.User));
        if (!(PasswordCheck.Verify(text[(colon + 1)..], _options.PasswordHash) && userMatches))
        {
            return false;
        }

        if (_goodLogins.Count < MaxRememberedLogins)
        {
            _goodLogins[remembered] = true;
        }

        return true;
    }

    private const string SignInPage = """
        <!doctype html>
        <html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
        <title>HumWatch — sign in</title><link rel="stylesheet" href="/style.css"></head>
        <body class="signin"><main><h1>HumWatch</h1>
        <p>This page needs the access token its administrator set (<code>Web:AccessToken</code>).</p>
        <form method="get" action="/"><label for="token">Access token</label>
        <input id="token" name="token" type="password" autocomplete="current-password" required>
        <button type="submit">Open the rooms</button></form></main></body></html>
        """;
}
