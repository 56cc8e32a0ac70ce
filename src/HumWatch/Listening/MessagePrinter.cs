using System.Globalization;
using System.Text;
using System.Text.Json;
using HumWatch.Core.Reporting;

namespace HumWatch.Cli.Listening;

/// <summary>What a console session has already said once: the safety caution, and what "aliased" means.</summary>
internal sealed class PrintSession
{
    /// <summary>True once the caution has been printed.</summary>
    public bool CautionShown { get; set; }

    /// <summary>True once "aliased" has been explained.</summary>
    public bool AliasedExplained { get; set; }
}

/// <summary>Turns published messages (topic + JSON body) into one readable line each.</summary>
internal static class MessagePrinter
{
    /// <summary>Indent of the lines under an alert (hint, caution), so they line up under its text.</summary>
    private const string Indent = "           ";

    /// <summary>The line for a message, or null when it is not worth a line (e.g. status in quiet mode).</summary>
    /// <param name="topic">Topic frame.</param>
    /// <param name="body">JSON body.</param>
    /// <param name="includeStatus">Print status messages.</param>
    /// <param name="session">
    /// The console session: the first hint of a session is followed by the safety caution reports carry, and the
    /// first aliased line says what aliased means. Null prints each message on its own (no session notes).
    /// </param>
    public static string? Format(string topic, byte[] body, bool includeStatus, PrintSession? session = null)
    {
        var kind = topic.Split('/', 2)[0];
        JsonElement json;
        try
        {
            json = JsonDocument.Parse(body).RootElement.Clone();
        }
        catch (JsonException)
        {
            return $"{topic}: (body is not JSON: {Encoding.UTF8.GetString(body)})";
        }

        var c = CultureInfo.InvariantCulture;
        var stream = Text(json, "stream") ?? topic;
        var when = json.TryGetProperty("utc", out var utc) && utc.TryGetDateTimeOffset(out var t)
            ? t.ToLocalTime().ToString("HH:mm:ss", c)
            : DateTimeOffset.Now.ToString("HH:mm:ss", c);
        switch (kind)
        {
            case "alert":
            {
                var what = Describe(json, session);
                var evt = Text(json, "event");
                var severity = Text(json, "severity");
                var head = evt == "severity" ? $"now {severity} (was {Text(json, "previousSeverity")})" : $"{severity} — raised";
                var amplitude = Number(json, "amplitudeUvRms") is { } a ? string.Create(c, $", {a:0.0} µV RMS") : "";
                var share = Number(json, "channelShare") is { } s ? string.Create(c, $", {s * 100:0}% of channels") : "";
                var worst = json.TryGetProperty("worstChannels", out var w) && w.ValueKind == JsonValueKind.Array && w.GetArrayLength() > 0
                    ? $" (strongest: {string.Join(", ", w.EnumerateArray().Select(x => x.GetString()))})"
                    : "";
                var hint = Text(json, "suggestion") is { } h ? $"{Environment.NewLine}{Indent}hint: {h}" : "";
                if (hint.Length > 0 && session is { CautionShown: false })
                {
                    // Once per session, as a report carries it once: the caution that goes with every hint.
                    hint += $"{Environment.NewLine}{Indent}caution (applies to every hint): {SafetyNotice.Text}";
                    session.CautionShown = true;
                }

                return $"{when}  ▲ {stream}: {what} {head}{amplitude}{share}{worst}{hint}";
            }

            case "clear":
            {
                var what = Describe(json, session);
                var duration = Number(json, "durationSeconds") ?? 0;
                var peak = Number(json, "peakAmplitudeUvRms") is { } p ? string.Create(c, $", peak {p:0.0} µV RMS") : "";
                return string.Create(c, $"{when}  ▽ {stream}: {what} cleared ({Text(json, "reason")}) after {duration:0} s{peak}");
            }

            case "status":
                if (!includeStatus)
                {
                    return null;
                }

                var lag = Lag(Number(json, "lagSeconds"), json.TryGetProperty("utc", out var u) && u.TryGetDateTimeOffset(out var at) ? at : null);
                return string.Create(c, $"{when}  · {stream}: {Number(json, "framesAnalysed") ?? 0:0} frames, {Number(json, "linesPresent") ?? 0:0} lines, {Number(json, "activeAlerts") ?? 0:0} active alerts, {Number(json, "chunksDropped") ?? 0:0} dropped{lag}");

            case "summary":
                return $"{when}  ■ {stream}: daily summary for {Text(json, "day") ?? "?"} — {Text(json, "verdict") ?? "see the summary file"}";

            default:
                return $"{when}  {topic}: {json.GetRawText()}";
        }
    }

    /// <summary>Beyond this, a stream's data is not live: it is a replay (demo --start, a copied recording) or a clock is off.</summary>
    internal const double ReplayLagSeconds = 600;

    /// <summary>Below this, the lag is the normal wait for a chunk and a span: not worth a word.</summary>
    internal const double QuietLagSeconds = 10;

    /// <summary>
    /// The status line's note on how far the analysed data is from now: nothing for the usual few seconds, "N s behind"
    /// for a live stream that lags, and the data's own time for a replay (hours behind is not alarming there).
    /// </summary>
    internal static string Lag(double? lagSeconds, DateTimeOffset? statusUtc)
    {
        if (lagSeconds is not { } lag || Math.Abs(lag) < QuietLagSeconds)
        {
            return "";
        }

        var c = CultureInfo.InvariantCulture;
        if (Math.Abs(lag) < ReplayLagSeconds)
        {
            return lag > 0 ? string.Create(c, $", {lag:0} s behind real time") : string.Create(c, $", data {-lag:0} s ahead of this clock");
        }

        if (statusUtc is not { } utc)
        {
            return lag > 0 ? ", replaying past data" : ", data ahead of this clock";
        }

        var dataUtc = utc.UtcDateTime.AddSeconds(-lag);
        return lag > 0
            ? string.Create(c, $", replaying data from {dataUtc:yyyy-MM-dd HH:mm} UTC")
            : string.Create(c, $", data dated {dataUtc:yyyy-MM-dd HH:mm} UTC, ahead of this clock");
    }

    private static string Describe(JsonElement json, PrintSession? session)
    {
        var c = CultureInfo.InvariantCulture;
        if (Text(json, "fault") is { } fault)
        {
            // Raise messages name the channel in worstChannels; clear messages only in the key "fault/<channel>/<kind>".
            var channel = json.TryGetProperty("worstChannels", out var w) && w.ValueKind == JsonValueKind.Array && w.GetArrayLength() > 0
                ? w[0].GetString()
                : Text(json, "key")?.Split('/') is [_, var label, _] ? label : "a channel";
            return $"channel {channel} {fault}";
        }

        var frequency = Number(json, "frequencyHz") is { } f ? string.Create(c, $"{f:0.00} Hz ") : "";
        var source = Text(json, "source") ?? "unidentified line";
        // Spelled as in keys and labels (h3 = the third harmonic); the fundamental goes without.
        var harmonic = Number(json, "harmonic") is { } h && h > 1 ? string.Create(c, $" h{h:0}") : "";
        var aliased = "";
        if (json.TryGetProperty("aliased", out var al) && al.ValueKind == JsonValueKind.True)
        {
            aliased = session is { AliasedExplained: false } ? $", aliased ({PlainWords.Aliased})" : ", aliased";
            if (session is not null)
            {
                session.AliasedExplained = true;
            }
        }

        return $"{frequency}{source}{harmonic}{aliased}";
    }

    private static string? Text(JsonElement json, string name) =>
        json.TryGetProperty(name, out var value) && value.ValueKind == JsonValueKind.String ? value.GetString() : null;

    private static double? Number(JsonElement json, string name) =>
        json.TryGetProperty(name, out var value) && value.ValueKind == JsonValueKind.Number ? value.GetDouble() : null;
}
