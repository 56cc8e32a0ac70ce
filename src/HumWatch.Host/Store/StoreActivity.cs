using HumWatch.Core.Summaries;

namespace HumWatch.Host.Store;

/// <summary>Which streams and local days have data: queries over the ledger and the alerts together.</summary>
internal sealed class StoreActivity(StoreConnection connection)
{
    /// <summary>
    /// Throws when the database cannot be written to now (SQLite: takes the file's write lock and lets it go again;
    /// PostgreSQL: asks whether the server takes writes). Writes nothing.
    /// </summary>
    public void CheckWritable() => connection.CheckWritable();

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
                SELECT DISTINCT stream FROM minute_ledger WHERE minute_utc >= @from AND minute_utc < @to
                UNION SELECT DISTINCT stream FROM alerts WHERE utc_ms >= @fromMs AND utc_ms < @toMs
                ORDER BY 1
                """);
            Sql.Add(command, "@from", fromUtc.ToUnixTimeSeconds());
            Sql.Add(command, "@to", toUtc.ToUnixTimeSeconds());
            Sql.Add(command, "@fromMs", fromUtc.ToUnixTimeMilliseconds());
            Sql.Add(command, "@toMs", toUtc.ToUnixTimeMilliseconds());
            return Sql.ReadAll(command, static reader => reader.GetString(0));
        });

        // SQLite's text order is by bytes; ordinal order by UTF-16 units can differ outside the BMP.
        result.Sort(StringComparer.Ordinal);
        return result;
    }

    /// <summary>
    /// The end of the stream's last monitored time in the minute ledger (start of its newest "*" minute plus the seconds
    /// monitored in it), or null when the ledger has none.
    /// </summary>
    public DateTimeOffset? LastMonitoredUtc(string stream) => connection.Run(c =>
    {
        using var command = Sql.Command(c, """
            SELECT minute_utc, monitored_s FROM minute_ledger
            WHERE stream = @stream AND source_key = '*'
            ORDER BY minute_utc DESC LIMIT 1
            """);
        Sql.Add(command, "@stream", stream);
        using var reader = command.ExecuteReader();
        return reader.Read()
            ? DateTimeOffset.FromUnixTimeSeconds(Sql.Int64(reader, 0)).AddSeconds(reader.GetDouble(1))
            : (DateTimeOffset?)null;
    });

    /// <summary>Local days in <paramref name="zone"/> that have ledger rows or alerts, oldest first.</summary>
    public IReadOnlyList<DateOnly> Days(TimeZoneInfo zone)
    {
        ArgumentNullException.ThrowIfNull(zone);
        var buckets = connection.Run(c =>
        {
            // 15-minute buckets: every UTC offset in use is a whole number of quarter hours, so a bucket never spans two local days.
            using var command = Sql.Command(c, "SELECT minute_utc / 900 FROM minute_ledger UNION SELECT utc_ms / 900000 FROM alerts");
            return Sql.ReadAll(command, static reader => Sql.Int64(reader, 0));
        });

        var days = new SortedSet<DateOnly>();
        foreach (var bucket in buckets)
        {
            days.Add(LocalDay.DayOf(DateTimeOffset.FromUnixTimeSeconds(bucket * 900), zone));
        }

        return [.. days];
    }
}
