using System.Globalization;
using System.Text.Json;
using System.Text.RegularExpressions;
using HumWatch.Core.Summaries;
using HumWatch.Host.Configuration;
using HumWatch.Host.Serialization;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Http;
using Microsoft.AspNetCore.Routing;

namespace HumWatch.Host.Web;

/// <summary>The read-only JSON API under /api/v1/ (docs/http.md), the day sheets' files and the health probes.</summary>
internal sealed partial class WebApi(
    RoomBoard board,
    FleetRooms fleet,
    LiveSpectra spectra,
    HumWatchStore store,
    DailySummaryRenderer renderer,
    BoundSettings settings,
    Readiness readiness,
    TimeProvider time)
{
    /// <summary>Most alert events one request returns.</summary>
    public const int MaxAlerts = 5000;

    /// <summary>Alert events returned when the request names no limit.</summary>
    public const int DefaultAlerts = 200;

    private readonly TimeZoneInfo _zone = settings.Site.ResolveTimeZone();

    public void Map(IEndpointRouteBuilder app)
    {
        app.MapGet("/api/v1/site", Site);
        app.MapGet("/api/v1/rooms", Rooms);
        app.MapGet("/api/v1/rooms/{stream}", Room);
        app.MapGet("/api/v1/rooms/{stream}/spectrum", Spectrum);
        app.MapGet("/api/v1/instances", (HttpContext c) => Json(c, fleet.Instances(), WebJsonContext.Output.InstancesView));
        app.MapGet("/api/v1/alerts", Alerts);
        app.MapGet("/api/v1/summaries", Summaries);
        app.MapGet("/api/v1/summaries/{day}/{stream}", Summary);
        app.MapGet("/api/v1/settings", (HttpContext c) => JsonBytes(c, SettingsView.Of(settings)));
        app.MapGet("/sheets/{day}/{file}", SheetFile);
        app.MapGet("/healthz", (HttpContext c) => JsonBytes(c, "{\"alive\":true}"u8.ToArray()));
        app.MapGet("/readyz", Ready);
    }

    /// <summary>{"full": …, "utc": …, "rooms": [...], "removed": [...]}: a snapshot, or the rooms changed since the last one.</summary>
    public byte[] RoomsJson(bool full, IEnumerable<byte[]> rooms, IEnumerable<string> removed)
    {
        using var buffer = new MemoryStream();
        using (var writer = new Utf8JsonWriter(buffer, OutputText.WriterOptions(indented: false)))
        {
            writer.WriteStartObject();
            writer.WriteBoolean("full", full);
            writer.WriteString("utc", time.GetUtcNow());
            writer.WriteStartArray("rooms");
            foreach (var room in rooms)
            {
                writer.WriteRawValue(room, skipInputValidation: true);
            }

            writer.WriteEndArray();
            writer.WriteStartArray("removed");
            foreach (var stream in removed)
            {
                writer.WriteStringValue(stream);
            }

            writer.WriteEndArray();
            writer.WriteEndObject();
        }

        return buffer.ToArray();
    }

    private Task Site(HttpContext context) => Json(context, new SiteView(
        settings.Site.Name, _zone.Id, Today().ToString("yyyy-MM-dd", CultureInfo.InvariantCulture), settings.Web.SilentAfterSeconds,
        settings.Publish.StatusIntervalSeconds, Core.Reporting.SafetyNotice.Text), WebJsonContext.Output.SiteView);

    private Task Rooms(HttpContext context) => JsonBytes(context, RoomsJson(full: true, board.Snapshot(), []));

    private Task Room(HttpContext context, string stream) =>
        board.RoomJson(stream) is { } json ? JsonBytes(context, json) : NotFound(context, $"no room '{stream}' on the board");

    private Task Spectrum(HttpContext context, string stream) =>
        board.RemoteOwner(stream) is { } owner
            ? NotFound(context, $"'{stream}' is watched by instance {owner}: its live spectrum is served by that instance's page")
            : spectra.Read(stream, board.ActiveKeys(stream)) is { } view
            ? Json(context, view, WebJsonContext.Output.SpectrumView)
            : NotFound(context, $"no spectrum of '{stream}' yet: it appears with the room's first analysed frame");

    private Task Alerts(HttpContext context)
    {
        var query = context.Request.Query;
        var now = time.GetUtcNow();
        if (!TryTime(query["since"], now.AddDays(-1), out var since) || !TryTime(query["until"], DateTimeOffset.MaxValue, out var until))
        {
            return BadRequest(context, "since and until must be ISO 8601 times, e.g. 2026-03-02T09:00:00Z");
        }

        var kind = query["kind"].ToString();
        if (kind.Length > 0 && !HumWatchMetrics.AllKinds.Contains(kind))
        {
            return BadRequest(context, $"kind must be one of {string.Join(", ", HumWatchMetrics.AllKinds)} (got '{kind}')");
        }

        var limit = DefaultAlerts;
        if (query["limit"].ToString() is { Length: > 0 } limitText
            && (!int.TryParse(limitText, NumberStyles.None, CultureInfo.InvariantCulture, out limit) || limit is < 1 or > MaxAlerts))
        {
            return BadRequest(context, $"limit must be a whole number from 1 to {MaxAlerts} (got '{limitText}')");
        }

        var stream = query["stream"].ToString();
        var rows = store.Alerts.Newest(since, until, stream.Length > 0 ? stream : null, kind.Length > 0 ? kind : null, limit);
        return Json(context, new AlertsView(since, until, limit, [.. rows.Select(AlertView.From)]), WebJsonContext.Output.AlertsView);
    }

    private Task Summaries(HttpContext context)
    {
        var query = context.Request.Query;
        var stream = query["stream"].ToString();
        var today = Today();
        if (!TryDay(query["from"], today.AddDays(-31), out var from) || !TryDay(query["to"], today, out var to))
        {
            return BadRequest(context, "from and to must be local days as yyyy-MM-dd");
        }

        var sheets = new List<SheetView>();
        var root = settings.Summaries.Folder;
        if (Directory.Exists(root))
        {
            foreach (var dayFolder in Directory.EnumerateDirectories(root).Order(StringComparer.Ordinal).Reverse())
            {
                var dayText = Path.GetFileName(dayFolder);
                if (!DateOnly.TryParseExact(dayText, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out var day) || day < from || day > to)
                {
                    continue;
                }

                foreach (var file in Directory.EnumerateFiles(dayFolder, "*.json").Order(StringComparer.Ordinal))
                {
                    var name = Path.GetFileName(file);
                    if (name.EndsWith(".plots.json", StringComparison.Ordinal))
                    {
                        continue;
                    }

                    var room = name[..^".json".Length];
                    if (stream.Length == 0 || room == stream)
                    {
                        sheets.Add(Sheet(dayText, dayFolder, room, file));
                    }
                }
            }
        }

        return Json(context, new SheetsView(sheets), WebJsonContext.Output.SheetsView);
    }

    private static SheetView Sheet(string day, string folder, string stream, string file)
    {
        string? verdict = null;
        double? hours = null;
        double? affected = null;
        try
        {
            using var document = JsonDocument.Parse(File.ReadAllBytes(file));
            var summary = document.RootElement;
            verdict = summary.TryGetProperty("verdict", out var v) && v.ValueKind == JsonValueKind.String ? v.GetString() : null;
            hours = summary.TryGetProperty("hoursMonitored", out var h) && h.ValueKind == JsonValueKind.Number ? h.GetDouble() : null;
            affected = summary.TryGetProperty("affectedMinutes", out var a) && a.ValueKind == JsonValueKind.Number ? a.GetDouble() : null;
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or JsonException)
        {
            // A sheet being rewritten or unreadable still gets its links; its figures stay empty.
        }

        string Link(string suffix) => $"/sheets/{day}/{Uri.EscapeDataString(stream + suffix)}";
        string? IfWritten(string suffix) => File.Exists(Path.Combine(folder, stream + suffix)) ? Link(suffix) : null;
        return new SheetView(day, stream, verdict, hours, affected, new SheetFiles(
            Link(".json"), $"/sheets/{day}/{SummaryMarkdown.FileName}", IfWritten(".spectrum.png"), IfWritten(".timeline.png"), IfWritten(".mains.png")));
    }

    private Task Summary(HttpContext context, string day, string stream)
    {
        if (!DateOnly.TryParseExact(day, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out var date))
        {
            return BadRequest(context, $"the day must be yyyy-MM-dd (got '{day}')");
        }

        var written = Path.Combine(DailySummaryRenderer.DayFolder(settings.Summaries.Folder, date), stream + ".json");
        if (IsPlainName(stream) && File.Exists(written))
        {
            return JsonBytes(context, File.ReadAllBytes(written));
        }

        if (date != Today())
        {
            return NotFound(context, $"no day sheet of '{stream}' for {day}");
        }

        // Today so far, built from the store the way the sheet at midnight will be.
        var (summary, _) = renderer.Build(date, stream);
        return JsonBytes(context, DailySummaryRenderer.ToJson(summary));
    }

    private Task SheetFile(HttpContext context, string day, string file)
    {
        if (!DayPattern().IsMatch(day) || !IsPlainName(file))
        {
            return NotFound(context, "no such file");
        }

        var contentType = Path.GetExtension(file) switch
        {
            ".png" => "image/png",
            ".json" => "application/json; charset=utf-8",
            ".md" => "text/plain; charset=utf-8",
            _ => null,
        };
        var path = Path.Combine(Path.GetFullPath(settings.Summaries.Folder), day, file);
        if (contentType is null || !File.Exists(path))
        {
            return NotFound(context, "no such file");
        }

        context.Response.ContentType = contentType;
        return context.Response.SendFileAsync(path, context.RequestAborted);
    }

    private Task Ready(HttpContext context)
    {
        var view = readiness.Check();
        context.Response.StatusCode = view.Ready ? StatusCodes.Status200OK : StatusCodes.Status503ServiceUnavailable;
        return Json(context, view, WebJsonContext.Output.ReadinessView);
    }

    private DateOnly Today() => LocalDay.DayOf(time.GetUtcNow(), _zone);

    /// <summary>A file or stream name without folders in it, so a request cannot leave the summaries folder.</summary>
    private static bool IsPlainName(string name) =>
        name.Length > 0 && name == Path.GetFileName(name) && name is not ("." or "..") && name.IndexOfAny(['/', '\\', '\0']) < 0;

    private static bool TryTime(Microsoft.Extensions.Primitives.StringValues text, DateTimeOffset fallback, out DateTimeOffset value)
    {
        value = fallback;
        return text.Count == 0 || DateTimeOffset.TryParse(text.ToString(), CultureInfo.InvariantCulture, DateTimeStyles.AssumeUniversal, out value);
    }

    private static bool TryDay(Microsoft.Extensions.Primitives.StringValues text, DateOnly fallback, out DateOnly value)
    {
        value = fallback;
        return text.Count == 0 || DateOnly.TryParseExact(text.ToString(), "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out value);
    }

    internal static Task Json<T>(HttpContext context, T value, System.Text.Json.Serialization.Metadata.JsonTypeInfo<T> type) =>
        JsonBytes(context, JsonSerializer.SerializeToUtf8Bytes(value, type));

    internal static Task JsonBytes(HttpContext context, byte[] json)
    {
        context.Response.ContentType = "application/json; charset=utf-8";
        context.Response.Headers.CacheControl = "no-store";
        return context.Response.Body.WriteAsync(json, context.RequestAborted).AsTask();
    }

    private static Task NotFound(HttpContext context, string error)
    {
        context.Response.StatusCode = StatusCodes.Status404NotFound;
        return Json(context, new ErrorView(error), WebJsonContext.Output.ErrorView);
    }

    private static Task BadRequest(HttpContext context, string error)
    {
        context.Response.StatusCode = StatusCodes.Status400BadRequest;
        return Json(context, new ErrorView(error), WebJsonContext.Output.ErrorView);
    }

    [GeneratedRegex("^[0-9]{4}-[0-9]{2}-[0-9]{2}$")]
    private static partial Regex DayPattern();
}
