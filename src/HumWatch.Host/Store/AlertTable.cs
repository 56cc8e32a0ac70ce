using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Core.Summaries;
using System.Data.Common;

namespace HumWatch.Host.Store;

/// <summary>The <c>alerts</c> table: one row per alert event, text columns in the spellings docs/store.md lists.</summary>
/// <param name="connection">The store's connection.</param>
/// <param name="instance">Written into each stored event's instance column: the instance that stored it; null (tools, older tests) writes NULL.</param>
internal sealed class AlertTable(StoreConnection connection, string? instance = null) : IAlertEventStore
{
    private const string Columns = """
        stream, key, kind, event, severity, source_name, harmonic, aliased, frequency_hz,
        amplitude_uv_rms, channel_share, worst_channels, suggestion, stream_seconds, utc_ms, onset_utc_ms,
        duration_s, peak_uv_rms, peak_severity, reason, evidence, instance
        """;

    /// <summary>Stores one alert event; returns its row id.</summary>
    public long AppendAlert(AlertEvent alertEvent)
    {
        ArgumentNullException.ThrowIfNull(alertEvent);
        var row = AlertColumns.Of(alertEvent);
        return connection.Run(c =>
        {
            using var command = Sql.Command(c, $"""
                INSERT INTO alerts ({Columns})
                VALUES (@stream, @key, @kind, @event, @severity, @sourceName, @harmonic, @aliased, @frequency,
                    @amplitude, @share, @worst, @suggestion, @streamSeconds, @utc, @onset,
                    @duration, @peak, @peakSeverity, @reason, @evidence, @instance)
                RETURNING id
                """);
            var identified = alertEvent.Source.IsIdentified;
            Sql.Add(command, "@stream", alertEvent.StreamId);
            Sql.Add(command, "@key", alertEvent.Key.ToString());
            Sql.Add(command, "@kind", alertEvent.Key.Category.ToText());
            Sql.Add(command, "@event", alertEvent.EventKind.ToText());
            Sql.Add(command, "@severity", alertEvent.Severity.ToText());
            Sql.Add(command, "@sourceName", identified ? alertEvent.Source.Name : null);
            Sql.Add(command, "@harmonic", identified ? alertEvent.Source.Harmonic : null);
            Sql.Add(command, "@aliased", alertEvent.Source.Aliased ? 1 : 0);
            Sql.Add(command, "@frequency", row.FrequencyHz);
            Sql.Add(command, "@amplitude", row.AmplitudeUvRms);
            Sql.Add(command, "@share", row.ChannelShare);
            Sql.Add(command, "@worst", Sql.LabelsJson(row.WorstChannels));
            Sql.Add(command, "@suggestion", row.Suggestion);
            Sql.Add(command, "@streamSeconds", alertEvent.StreamSeconds);
            Sql.Add(command, "@utc", alertEvent.Utc.ToUnixTimeMilliseconds());
            Sql.Add(command, "@onset", row.OnsetUtc?.ToUnixTimeMilliseconds());
            Sql.Add(command, "@duration", row.DurationSeconds);
            Sql.Add(command, "@peak", row.PeakUvRms);
            Sql.Add(command, "@peakSeverity", row.PeakSeverity);
            Sql.Add(command, "@reason", row.Reason);
            Sql.Add(command, "@evidence", row.Evidence);
            Sql.Add(command, "@instance", instance);
            return Sql.Int64(command.ExecuteScalar()) ?? throw new InvalidOperationException($"Store {connection.Location}: the alert insert returned no id.");
        });
    }

    /// <summary>Alert events with UTC time in [fromUtc, toUtc), oldest first; all streams when <paramref name="stream"/> is null.</summary>
    public IReadOnlyList<StoredAlert> Between(DateTimeOffset fromUtc, DateTimeOffset toUtc, string? stream = null) => connection.Run(c =>
    {
        using var command = Sql.Command(c, $"""
            SELECT id, {Columns}
            FROM alerts
            WHERE utc_ms >= @from AND utc_ms < @to AND (@stream IS NULL OR stream = @stream)
            ORDER BY utc_ms, id
            """);
        Sql.Add(command, "@from", fromUtc.ToUnixTimeMilliseconds());
        Sql.Add(command, "@to", toUtc.ToUnixTimeMilliseconds());
        Sql.Add(command, "@stream", stream);
        return Sql.ReadAll(command, Read);
    });

    /// <summary>
    /// The newest alert events with UTC time in [fromUtc, toUtc), newest first, at most <paramref name="limit"/>; null
    /// filters match everything. <paramref name="kind"/> is the kind column's text (mains, display, site-tone, unidentified, fault).
    /// </summary>
    public IReadOnlyList<StoredAlert> Newest(DateTimeOffset fromUtc, DateTimeOffset toUtc, string? stream, string? kind, int limit) => connection.Run(c =>
    {
        using var command = Sql.Command(c, $"""
            SELECT id, {Columns}
            FROM alerts
            WHERE utc_ms >= @from AND utc_ms < @to AND (@stream IS NULL OR stream = @stream) AND (@kind IS NULL OR kind = @kind OR (@kind = 'site-tone' AND kind = 'site'))
            ORDER BY utc_ms DESC, id DESC
            LIMIT @limit
            """);
        Sql.Add(command, "@from", fromUtc.ToUnixTimeMilliseconds());
        Sql.Add(command, "@to", toUtc.ToUnixTimeMilliseconds());
        Sql.Add(command, "@stream", stream);
        Sql.Add(command, "@kind", kind);
        Sql.Add(command, "@limit", limit);
        return Sql.ReadAll(command, Read);
    });

    /// <summary>
    /// Alerts whose last stored event is not a clear: after an unclean stop, the alerts that stop left open. Each comes
    /// with its events from the raise on, oldest first.
    /// </summary>
    /// <param name="stream">Only this stream's; null for every stream.</param>
    /// <param name="storedBy">Only alerts whose newest event this says yes to, given that event's instance (null in rows of older builds); null for all.</param>
    public IReadOnlyList<IReadOnlyList<StoredAlert>> Unclosed(string? stream = null, Func<string?, bool>? storedBy = null) => connection.Run(c =>
    {
        using var last = Sql.Command(c, """
            SELECT a.stream, a.key, a.id, a.instance
            FROM alerts a
            JOIN (SELECT stream, key, max(id) AS id FROM alerts WHERE @stream IS NULL OR stream = @stream GROUP BY stream, key) newest ON newest.id = a.id
            WHERE a.event <> 'cleared'
            ORDER BY a.id
            """);
        Sql.Add(last, "@stream", stream);
        var open = Sql.ReadAll(last, static reader => (Stream: reader.GetString(0), Key: reader.GetString(1), LastId: Sql.Int64(reader, 2), Instance: Sql.NullableString(reader, 3)));
        var result = new List<IReadOnlyList<StoredAlert>>(open.Count);
        foreach (var (openStream, key, lastId, storer) in open)
        {
            if (storedBy is not null && !storedBy(storer))
            {
                continue;
            }

            using var events = Sql.Command(c, $"""
                SELECT id, {Columns}
                FROM alerts
                WHERE stream = @stream AND key = @key AND id <= @last
                  AND id >= coalesce((SELECT max(id) FROM alerts WHERE stream = @stream AND key = @key AND id <= @last AND event = 'raised'), 0)
                ORDER BY id
                """);
            Sql.Add(events, "@stream", openStream);
            Sql.Add(events, "@key", key);
            Sql.Add(events, "@last", lastId);
            result.Add(Sql.ReadAll(events, Read));
        }

        return result;
    });

    /// <summary>True when an event of the same stream, key, kind and UTC millisecond is already stored.</summary>
    public bool Contains(AlertEvent alertEvent)
    {
        ArgumentNullException.ThrowIfNull(alertEvent);
        return connection.Run(c =>
        {
            using var command = Sql.Command(c, """
                SELECT CASE WHEN EXISTS (SELECT 1 FROM alerts WHERE stream = @stream AND key = @key AND event = @event AND utc_ms = @utc) THEN 1 ELSE 0 END
                """);
            Sql.Add(command, "@stream", alertEvent.StreamId);
            Sql.Add(command, "@key", alertEvent.Key.ToString());
            Sql.Add(command, "@event", alertEvent.EventKind.ToText());
            Sql.Add(command, "@utc", alertEvent.Utc.ToUnixTimeMilliseconds());
            return Sql.Int64(command.ExecuteScalar()) is 1;
        });
    }

    /// <summary>
    /// True when the newest stored event of the stream's alert <paramref name="key"/> is a clear written because its
    /// process was gone: "service restarted", or "instance stopped" by a peer.
    /// </summary>
    public bool ClosedAtRestart(string stream, FindingKey key) => connection.Run(c =>
    {
        using var command = Sql.Command(c, """
            SELECT CASE WHEN event = 'cleared' AND reason IN (@restarted, @stopped) THEN 1 ELSE 0 END FROM alerts
            WHERE stream = @stream AND key = @key ORDER BY id DESC LIMIT 1
            """);
        Sql.Add(command, "@stream", stream);
        Sql.Add(command, "@key", key.ToString());
        Sql.Add(command, "@restarted", AlertClearReason.ServiceRestarted.ToText());
        Sql.Add(command, "@stopped", AlertClearReason.InstanceStopped.ToText());
        return Sql.Int64(command.ExecuteScalar()) is 1;
    });

    /// <summary>Alert events of one local day in <paramref name="zone"/>.</summary>
    public IReadOnlyList<StoredAlert> ForDay(DateOnly day, TimeZoneInfo zone, string? stream = null)
    {
        var (from, to) = LocalDay.RangeUtc(day, zone);
        return Between(from, to, stream);
    }

    private static StoredAlert Read(DbDataReader reader)
    {
        var key = FindingKey.Parse(reader.GetString(2));
        return new StoredAlert(
            Sql.Int64(reader, 0), reader.GetString(1), key, KindOf(reader.GetString(3), key), EventOf(reader.GetString(4)),
            SeverityOf(reader.GetString(5)), Sql.NullableString(reader, 6), reader.IsDBNull(7) ? null : Sql.Int32(reader, 7),
            Sql.Int64(reader, 8) != 0, Sql.NullableDouble(reader, 9), Sql.NullableDouble(reader, 10), Sql.NullableDouble(reader, 11),
            Sql.Labels(reader.GetString(12)), Sql.NullableString(reader, 13), reader.GetDouble(14),
            DateTimeOffset.FromUnixTimeMilliseconds(Sql.Int64(reader, 15)),
            reader.IsDBNull(16) ? null : DateTimeOffset.FromUnixTimeMilliseconds(Sql.Int64(reader, 16)),
            Sql.NullableDouble(reader, 17), Sql.NullableDouble(reader, 18),
            reader.IsDBNull(19) ? null : SeverityOf(reader.GetString(19)),
            reader.IsDBNull(20) ? null : ReasonOf(reader.GetString(20)))
        {
            EvidenceJson = Sql.NullableString(reader, 21),
            Instance = Sql.NullableString(reader, 22),
        };
    }

    // Text columns are read leniently: a value this build does not know must not make a whole day unreadable.

    /// <summary>The kind column; "site" (older stores) reads as a site tone; unknown text falls back to the key's category.</summary>
    private static FindingCategory KindOf(string text, FindingKey key) => FindingCategoryText.TryParse(text, out var kind) ? kind : key.Category;

    /// <summary>The event column; unknown text counts as a severity change, neither a raise nor a clear.</summary>
    private static AlertEventKind EventOf(string text) => AlertEventKindText.TryParse(text, out var kind) ? kind : AlertEventKind.SeverityChanged;

    /// <summary>A severity column; unknown text reads as none.</summary>
    private static AlertSeverity SeverityOf(string text) => AlertSeverityText.TryParse(text, out var severity) ? severity : AlertSeverity.None;

    /// <summary>The reason column; unknown text reads as no reason.</summary>
    private static AlertClearReason? ReasonOf(string text) => AlertClearReasonText.TryParse(text, out var reason) ? reason : null;

    /// <summary>The columns that depend on the kind of event; null where they do not apply.</summary>
    private readonly record struct AlertColumns(
        double? FrequencyHz, double? AmplitudeUvRms, double? ChannelShare, IReadOnlyList<string> WorstChannels, string? Suggestion,
        DateTimeOffset? OnsetUtc, double? DurationSeconds, double? PeakUvRms, string? PeakSeverity, string? Reason, string? Evidence)
    {
        public static AlertColumns Of(AlertEvent alertEvent) => alertEvent switch
        {
            AlertRaised raised => new(
                Sql.Finite(raised.FrequencyHz), Sql.Finite(raised.AmplitudeUvRms), Sql.Finite(raised.ChannelShare), raised.WorstChannels,
                raised.Suggestion, raised.OnsetUtc, null, null, null, null,
                raised.Category == AlertCategory.Line
                    ? System.Text.Json.JsonSerializer.Serialize(Checking.CheckEvidence.From(raised), Checking.CheckReportJsonContext.Output.CheckEvidence)
                    : null),
            AlertSeverityChanged changed => new(
                Sql.Finite(changed.FrequencyHz), Sql.Finite(changed.AmplitudeUvRms), Sql.Finite(changed.ChannelShare), changed.WorstChannels,
                null, null, null, null, null, null, null),
            AlertCleared cleared => new(
                Sql.Finite(cleared.FrequencyHz), null, null, [], null, null,
                Sql.Finite(cleared.DurationSeconds), Sql.Finite(cleared.PeakAmplitudeUvRms), cleared.PeakSeverity.ToText(), cleared.Reason.ToText(), null),
            _ => new(null, null, null, [], null, null, null, null, null, null, null),
        };
    }
}
