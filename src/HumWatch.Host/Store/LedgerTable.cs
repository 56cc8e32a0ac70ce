using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;

namespace HumWatch.Host.Store;

/// <summary>
/// The minute ledger: <c>minute_ledger</c> (one merged row per stream, minute and source) and <c>minute_ledger_parts</c>
/// (every (stream, session, sequence) ever applied).
/// </summary>
/// <remarks>
/// Double counting: every <see cref="MinuteRow"/> names its session and a running number. The pair goes into
/// minute_ledger_parts first; only when that insert is new is the row merged into minute_ledger (seconds added,
/// maximum kept), in the same transaction. A re-delivered row is ignored, while a later session's rows for the same
/// minute add to it. Files use their content hash as the session, so re-processing an interrupted file repeats the
/// same (session, sequence) pairs and adds nothing twice.
/// </remarks>
internal sealed class LedgerTable(StoreConnection connection) : ILedgerStore
{
    // Both SQLite and PostgreSQL evaluate every SET expression against the row as it was, so the order below does not
    // matter. The stored row's columns are qualified (minute_ledger.x): PostgreSQL needs it beside excluded.x. A CASE,
    // not SQLite's scalar max(a, b), which PostgreSQL lacks (its GREATEST is not SQLite's).
    private const string Upsert = """
        INSERT INTO minute_ledger (stream, minute_utc, source_key, monitored_s, affected_s, max_uv_rms, mean_median_uv_rms,
            worst_channels, mains_hz, parts)
        VALUES (@stream, @minute, @key, @monitored, @affected, @max, @median, @worst, @mains, 1)
        ON CONFLICT (stream, minute_utc, source_key) DO UPDATE SET
            monitored_s = minute_ledger.monitored_s + excluded.monitored_s,
            affected_s = minute_ledger.affected_s + excluded.affected_s,
            max_uv_rms = CASE WHEN minute_ledger.max_uv_rms IS NULL THEN excluded.max_uv_rms
                              WHEN excluded.max_uv_rms IS NULL THEN minute_ledger.max_uv_rms
                              WHEN excluded.max_uv_rms > minute_ledger.max_uv_rms THEN excluded.max_uv_rms
                              ELSE minute_ledger.max_uv_rms END,
            mean_median_uv_rms = CASE WHEN minute_ledger.mean_median_uv_rms IS NULL THEN excluded.mean_median_uv_rms
                                      WHEN excluded.mean_median_uv_rms IS NULL THEN minute_ledger.mean_median_uv_rms
                                      WHEN minute_ledger.affected_s + excluded.affected_s > 0
                                          THEN (minute_ledger.mean_median_uv_rms * minute_ledger.affected_s + excluded.mean_median_uv_rms * excluded.affected_s)
                                               / (minute_ledger.affected_s + excluded.affected_s)
                                      ELSE minute_ledger.mean_median_uv_rms END,
            worst_channels = CASE WHEN excluded.max_uv_rms IS NOT NULL AND (minute_ledger.max_uv_rms IS NULL OR excluded.max_uv_rms > minute_ledger.max_uv_rms)
                                  THEN excluded.worst_channels ELSE minute_ledger.worst_channels END,
            mains_hz = CASE WHEN minute_ledger.mains_hz IS NULL THEN excluded.mains_hz
                            WHEN excluded.mains_hz IS NULL THEN minute_ledger.mains_hz
                            WHEN minute_ledger.monitored_s + excluded.monitored_s > 0
                                THEN (minute_ledger.mains_hz * minute_ledger.monitored_s + excluded.mains_hz * excluded.monitored_s)
                                     / (minute_ledger.monitored_s + excluded.monitored_s)
                            ELSE minute_ledger.mains_hz END,
            parts = minute_ledger.parts + 1
        """;

    /// <summary>Adds minute rows in one transaction; returns how many were new (re-delivered rows are skipped).</summary>
    public int AddMinuteRows(IReadOnlyList<MinuteRow> rows)
    {
        ArgumentNullException.ThrowIfNull(rows);
        return connection.Run(c =>
        {
            using var transaction = c.BeginTransaction();
            using var part = Sql.Command(c, """
                INSERT INTO minute_ledger_parts (stream, session, seq, minute_utc, source_key)
                VALUES (@stream, @session, @seq, @minute, @key)
                ON CONFLICT (stream, session, seq) DO NOTHING
                """, transaction);
            using var upsert = Sql.Command(c, Upsert, transaction);
            var added = 0;
            for (var i = 0; i < rows.Count; i++)
            {
                var row = rows[i];
                var minute = row.MinuteUtc.ToUnixTimeSeconds();
                var key = row.SourceKey.ToString();
                part.Parameters.Clear();
                Sql.Add(part, "@stream", row.StreamId);
                Sql.Add(part, "@session", row.SessionId);
                Sql.Add(part, "@seq", row.Sequence);
                Sql.Add(part, "@minute", minute);
                Sql.Add(part, "@key", key);
                if (part.ExecuteNonQuery() == 0)
                {
                    continue;
                }

                upsert.Parameters.Clear();
                Sql.Add(upsert, "@stream", row.StreamId);
                Sql.Add(upsert, "@minute", minute);
                Sql.Add(upsert, "@key", key);
                Sql.Add(upsert, "@monitored", row.MonitoredSeconds);
                Sql.Add(upsert, "@affected", row.AffectedSeconds);
                Sql.Add(upsert, "@max", Sql.Finite(row.MaxAmplitudeUvRms));
                Sql.Add(upsert, "@median", Sql.Finite(row.MedianAmplitudeUvRms));
                Sql.Add(upsert, "@worst", Sql.LabelsJson(row.WorstChannels));
                Sql.Add(upsert, "@mains", Sql.Finite(row.MainsHz));
                upsert.ExecuteNonQuery();
                added++;
            }

            transaction.Commit();
            return added;
        });
    }

    /// <summary>Ledger rows of one stream with minute start in [fromUtc, toUtc), by minute then source key.</summary>
    public IReadOnlyList<StoredMinute> Rows(string stream, DateTimeOffset fromUtc, DateTimeOffset toUtc) => connection.Run(c =>
    {
        using var command = Sql.Command(c, """
            SELECT stream, minute_utc, source_key, monitored_s, affected_s, max_uv_rms, mean_median_uv_rms, worst_channels, mains_hz, parts
            FROM minute_ledger
            WHERE stream = @stream AND minute_utc >= @from AND minute_utc < @to
            ORDER BY minute_utc, source_key
            """);
        Sql.AddStreamRange(command, stream, CeilingSeconds(fromUtc), CeilingSeconds(toUtc));
        return Sql.ReadAll(command, static reader => new StoredMinute(
            reader.GetString(0), DateTimeOffset.FromUnixTimeSeconds(Sql.Int64(reader, 1)), FindingKey.Parse(reader.GetString(2)),
            reader.GetDouble(3), reader.GetDouble(4), Sql.NullableDouble(reader, 5), Sql.NullableDouble(reader, 6),
            Sql.Labels(reader.GetString(7)), Sql.NullableDouble(reader, 8), Sql.Int32(reader, 9)));
    });

    /// <summary>Minutes are stored by their start second: a range bound inside a second starts at the next one.</summary>
    private static long CeilingSeconds(DateTimeOffset utc)
    {
        var ms = utc.ToUnixTimeMilliseconds();
        return (ms / 1000) + (ms % 1000 > 0 ? 1 : 0);
    }
}
