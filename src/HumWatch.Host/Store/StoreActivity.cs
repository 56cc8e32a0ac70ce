using HumWatch.Core.Summaries;

namespace HumWatch.Host.Store;

/// <summary>Which streams and local days have data: queries over the ledger and the alerts together.</summary>
internal sealed class StoreActivity(StoreConnection connection)
{
    /// <summary>Streams that have ledger rows or alerts, ordinal order.</summary>
    public IReadOnlyList<string> Streams() => connection.Run(c =>
    {
        using var command = Sql.Command(c, "SELECT stream FROM minute_ledger UNION SELECT stream FROM alerts ORDER BY 1");
        return Sql.ReadAll(command, static reader => reader.GetString(0));
    });

    /// <summary>Streams with ledger rows (minute start) or alerts in [fromUtc, toUtc), ordinal order.</summary>
    public IReadOnlyList<string> StreamsBetween(DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        var result = connection.Run(c =>
        {
            using var command = Sql.Command(c, """
                SELECT DISTINCT stream FROM minute_ledger WHERE minute_utc >= $from AND minute_utc < $to
                UNION SELECT DISTINCT stream FROM alerts WHERE utc_ms >= $fromMs AND utc_ms < $toMs
                ORDER BY 1
                """);
            Sql.Add(command, "$from", fromUtc.ToUnixTimeSeconds());
            Sql.Add(command, "$to", toUtc.ToUnixTimeSeconds());
            Sql.Add(command, "$fromMs", fromUtc.ToUnixTimeMilliseconds());
            Sql.Add(command, "$toMs", toUtc.ToUnixTimeMilliseconds());
            return Sql.ReadAll(command, static reader => reader.GetString(0));
        });

        // SQLite's text order is by bytes; ordinal order by UTF-16 units can differ outside the BMP.
        result.Sort(StringComparer.Ordinal);
        return result;
    }

    /// <summary>Local days in <paramref name="zone"/> that have ledger rows or alerts, oldest first.</summary>
    public IReadOnlyList<DateOnly> Days(TimeZoneInfo zone)
    {
        ArgumentNullException.ThrowIfNull(zone);
        var buckets = connection.Run(c =>
        {
            // 15-minute buckets: every UTC offset in use is a whole number of quarter hours, so a bucket never spans two local days.
            using var command = Sql.Command(c, "SELECT minute_utc / 900 FROM minute_ledger UNION SELECT utc_ms / 900000 FROM alerts");
            return Sql.ReadAll(command, static reader => reader.GetInt64(0));
        });

        var days = new SortedSet<DateOnly>();
        foreach (var bucket in buckets)
        {
            days.Add(LocalDay.DayOf(DateTimeOffset.FromUnixTimeSeconds(bucket * 900), zone));
        }

        return [.. days];
    }
}
