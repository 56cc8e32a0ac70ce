namespace HumWatch.Host.Store;

/// <summary>One stream watched by one instance in one UTC hour of its data, and when the instance last saw it.</summary>
internal readonly record struct StreamSighting(string Stream, long HourUtc, DateTimeOffset LastSeenUtc);

/// <summary>The instance that saw a stream last (wall clock), and when.</summary>
internal sealed record StreamOwner(string Stream, string Instance, DateTimeOffset LastSeenUtc);

/// <summary>
/// The <c>stream_owners</c> table: per stream, instance and UTC hour of the stream's data, the last time (wall clock)
/// the instance saw the stream. Written by each instance's heartbeat for the streams it saw since the last beat (never
/// per chunk); read for the fleet view (who watches a room now) and the day sheets (who watched it that day).
/// </summary>
internal sealed class StreamOwnerTable(StoreConnection connection)
{
    /// <summary>Records what <paramref name="instance"/> saw since its last beat, in one transaction; a later sighting never moves last_seen back.</summary>
    public void Record(string instance, IReadOnlyCollection<StreamSighting> sightings)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(instance);
        ArgumentNullException.ThrowIfNull(sightings);
        if (sightings.Count == 0)
        {
            return;
        }

        connection.Run(c =>
        {
            using var transaction = c.BeginTransaction();
            using var command = Sql.Command(c, """
                INSERT INTO stream_owners (stream, instance, hour_utc, last_seen_utc_ms) VALUES (@stream, @instance, @hour, @seen)
                ON CONFLICT (stream, instance, hour_utc) DO UPDATE SET last_seen_utc_ms =
                    CASE WHEN excluded.last_seen_utc_ms > stream_owners.last_seen_utc_ms THEN excluded.last_seen_utc_ms ELSE stream_owners.last_seen_utc_ms END
                """, transaction);
            foreach (var s in sightings)
            {
                command.Parameters.Clear();
                Sql.Add(command, "@stream", s.Stream);
                Sql.Add(command, "@instance", instance);
                Sql.Add(command, "@hour", s.HourUtc);
                Sql.Add(command, "@seen", s.LastSeenUtc.ToUnixTimeMilliseconds());
                command.ExecuteNonQuery();
            }

            transaction.Commit();
            return true;
        });
    }

    /// <summary>
    /// Per stream seen at or after <paramref name="sinceUtc"/>, the instance that saw it last (ties: the first name in
    /// ordinal order), by stream.
    /// </summary>
    public IReadOnlyList<StreamOwner> Latest(DateTimeOffset sinceUtc)
    {
        var rows = connection.Run(c =>
        {
            using var command = Sql.Command(c, """
                SELECT stream, instance, max(last_seen_utc_ms) FROM stream_owners
                WHERE last_seen_utc_ms >= @since GROUP BY stream, instance
                """);
            Sql.Add(command, "@since", sinceUtc.ToUnixTimeMilliseconds());
            return Sql.ReadAll(command, static r => new StreamOwner(r.GetString(0), r.GetString(1), DateTimeOffset.FromUnixTimeMilliseconds(Sql.Int64(r, 2))));
        });

        var latest = new SortedDictionary<string, StreamOwner>(StringComparer.Ordinal);
        foreach (var row in rows)
        {
            if (!latest.TryGetValue(row.Stream, out var best) || row.LastSeenUtc > best.LastSeenUtc
                || (row.LastSeenUtc == best.LastSeenUtc && string.CompareOrdinal(row.Instance, best.Instance) < 0))
            {
                latest[row.Stream] = row;
            }
        }

        return [.. latest.Values];
    }

    /// <summary>
    /// The instances that watched <paramref name="stream"/> data of [fromUtc, toUtc): those with an hour overlapping the
    /// range, in ordinal order. Stored data only, so a day names the same instances whenever it is rendered.
    /// </summary>
    public IReadOnlyList<string> InstancesBetween(string stream, DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(stream);
        var names = connection.Run(c =>
        {
            using var command = Sql.Command(c, """
                SELECT DISTINCT instance FROM stream_owners
                WHERE stream = @stream AND hour_utc < @to AND hour_utc + 3600 > @from
                """);
            Sql.Add(command, "@stream", stream);
            Sql.Add(command, "@from", fromUtc.ToUnixTimeSeconds());
            Sql.Add(command, "@to", toUtc.ToUnixTimeSeconds());
            return Sql.ReadAll(command, static r => r.GetString(0));
        });
        names.Sort(StringComparer.Ordinal);
        return names;
    }
}
