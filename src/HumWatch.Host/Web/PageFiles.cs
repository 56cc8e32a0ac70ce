using System.Net;
using System.Reflection;
using System.Security.Cryptography;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Http;
using Microsoft.AspNetCore.Routing;

namespace HumWatch.Host.Web;

/// <summary>
/// The page's own files, embedded in the assembly (no build step, nothing fetched from elsewhere): one HTML shell for
/// the board (/) and a room (/room/NAME), a script and a stylesheet. The shell gets the site's name and the caution
/// written in once, so both are there even before the script runs.
/// </summary>
internal sealed class PageFiles
{
    private readonly Dictionary<string, (byte[] Body, string ContentType, string ETag)> _files = new(StringComparer.Ordinal);

    public PageFiles(string siteName, string caution)
    {
        Add("/app.js", Read("app.js"), "text/javascript; charset=utf-8");
        Add("/style.css", Read("style.css"), "text/css; charset=utf-8");
        Add("/mark.svg", Read("mark.svg"), "image/svg+xml");
        var shell = System.Text.Encoding.UTF8.GetString(Read("index.html"))
            .Replace("{{site}}", WebUtility.HtmlEncode(siteName), StringComparison.Ordinal)
            .Replace("{{caution}}", WebUtility.HtmlEncode(caution), StringComparison.Ordinal);
        Add("/", System.Text.Encoding.UTF8.GetBytes(shell), "text/html; charset=utf-8");
    }

    /// <summary>
    /// Scripts and styles only from this server, no inline script, no frames: the page loads nothing from outside and
    /// a room name can never run as code.
    /// </summary>
    public const string ContentSecurityPolicy =
        "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data:; connect-src 'self'; frame-ancestors 'none'; base-uri 'none'; form-action 'self'";

    public void Map(IEndpointRouteBuilder app)
    {
        app.MapGet("/", c => Serve(c, "/"));
        app.MapGet("/room/{stream}", c => Serve(c, "/"));
        foreach (var path in _files.Keys.Where(p => p != "/"))
        {
            app.MapGet(path, c => Serve(c, path));
        }
    }

    private Task Serve(HttpContext context, string path)
    {
        var (body, contentType, etag) = _files[path];
        context.Response.Headers.ETag = etag;
        context.Response.Headers.CacheControl = "no-cache";
        if (context.Request.Headers.IfNoneMatch == etag)
        {
            context.Response.StatusCode = StatusCodes.Status304NotModified;
            return Task.CompletedTask;
        }

        context.Response.ContentType = contentType;
        return context.Response.Body.WriteAsync(body, context.RequestAborted).AsTask();
    }

    private void Add(string path, byte[] body, string contentType) =>
        _files[path] = (body, contentType, $"\"{Convert.ToHexString(SHA256.HashData(body))[..16]}\"");

    private static byte[] Read(string name)
    {
        using var stream = Assembly.GetExecutingAssembly().GetManifestResourceStream("HumWatch.Web." + name)
            ?? throw new InvalidOperationException($"The page file {name} is not embedded in the assembly.");
        using var copy = new MemoryStream();
        stream.CopyTo(copy);
        return copy.ToArray();
    }
}
