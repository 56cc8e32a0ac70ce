using System.Buffers.Binary;
using System.Globalization;
using System.Text.Json;
using HumWatch.Core.Findings;
using HumWatch.Core.Summaries;
using HumWatch.Host.Store;
using Microsoft.Data.Sqlite;

namespace HumWatch.Host.Summaries;

/// <summary>
/// The summaries' view of the SQLite store: ledger and alerts through <see cref="HumWatchStore"/>, plus the hourly
/// spectrum parts and the rendered-day record on a connection of its own (WAL lets both connections work side by side).
/// Thread-safe.
/// </summary>
internal sealed class SummaryStore : ISpectrumPartSink, IDisposable
{
    private readonly Lock _gate = new();
    private readonly HumWatchStore _store;
    private readonly SqliteConnection _connection;
    private readonly TimeProvider _timeProvider;
    private bool _disposed;

    /// <param name="store">The open (and therefore migrated) store.</param>
    /// <param name="timeProvider">Clock for the rendered-day record.</param>
    public SummaryStore(HumWatchStore store, TimeProvider timeProvider)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(timeProvider);
        _store = store;
        _timeProvider = timeProvider;
        var builder = new SqliteConnectionStringBuilder
        {
            DataSource = store.FullPath,
            Mode = SqliteOpenMode.ReadWrite,
            Pooling = false,
        };
        _connection = new SqliteConnection(builder.ToString());
        try
        {
            _connection.Open();
            using var command = _connection.CreateCommand();
            command.CommandText = "PRAGMA busy_timeout = 5000";
            command.ExecuteNonQuery();
        }
        catch (SqliteException ex)
        {
            _connection.Dispose();
            throw new InvalidOperationException($"Store {store.FullPath}: cannot open the database for summaries: {ex.Message}", ex);
        }
    }

    /// <summary>The underlying store.</summary>
    public HumWatchStore Store => _store;

    /// <summary>Stores one spectrum part; a re-delivered part (same stream, session, sequence) is ignored.</summary>
    public void OnSpectrumPart(SpectrumPart part) => AddSpectrumParts([part]);

    /// <summary>Stores spectrum parts in one transaction; returns how many were new.</summary>
    public int AddSpectrumParts(IReadOnlyList<SpectrumPart> parts)
    {
        ArgumentNullException.ThrowIfNull(parts);
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            using var transaction = _connection.BeginTransaction();
            using var command = _connection.CreateCommand();
            command.Transaction = transaction;
            command.CommandText = """
                INSERT OR IGNORE INTO spectrum_parts (stream, session, seq, hour_utc, bin_width_hz, seconds, psd, lines)
                VALUES ($stream, $session, $seq, $hour, $bin, $seconds, $psd, $lines)
                """;
            var added = 0;
            foreach (var part in parts)
            {
                var blob = new byte[part.MeanPsdUv2PerHz.Length * sizeof(float)];
                for (var k = 0; k < part.MeanPsdUv2PerHz.Length; k++)
                {
                    BinaryPrimitives.WriteSingleLittleEndian(blob.AsSpan(k * sizeof(float)), part.MeanPsdUv2PerHz[k]);
                }

                var lines = new Dictionary<string, double[]>(StringComparer.Ordinal);
                foreach (var (key, tally) in part.Lines)
                {
                    lines[key.ToString()] = [tally.SumHz, tally.Frames];
                }

                command.Parameters.Clear();
                command.Parameters.AddWithValue("$stream", part.StreamId);
                command.Parameters.AddWithValue("$session", part.SessionId);
                command.Parameters.AddWithValue("$seq", part.Sequence);
                command.Parameters.AddWithValue("$hour", part.HourUtc.ToUnixTimeSeconds());
                command.Parameters.AddWithValue("$bin", part.BinWidthHz);
                command.Parameters.AddWithValue("$seconds", part.Seconds);
                command.Parameters.AddWithValue("$psd", blob);
                command.Parameters.AddWithValue("$lines", JsonSerializer.Serialize(lines, SummaryJsonContext.Output.DictionaryStringDoubleArray));
                added += command.ExecuteNonQuery();
            }

            transaction.Commit();
            return added;
        }
    }

    /// <summary>
    /// The seconds-weighted mean spectrum of a stream over [fromUtc, toUtc) (hours by their start), using the bin
    /// width that covers the most time; null when no part is stored.
    /// </summary>
    public DaySpectrum? DaySpectrum(string stream, DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(stream);
        var parts = new List<(double BinWidthHz, double Seconds, byte[] Psd, string Lines)>();
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            using var command = _connection.CreateCommand();
            command.CommandText = """
                SELECT bin_width_hz, seconds, psd, lines FROM spectrum_parts
                WHERE stream = $stream AND hour_utc >= $from AND hour_utc < $to
                ORDER BY hour_utc, session, seq
                """;
            command.Parameters.AddWithValue("$stream", stream);
            command.Parameters.AddWithValue("$from", fromUtc.ToUnixTimeSeconds());
            command.Parameters.AddWithValue("$to", toUtc.ToUnixTimeSeconds());
            using var reader = command.ExecuteReader();
            while (reader.Read())
            {
                parts.Add((reader.GetDouble(0), reader.GetDouble(1), (byte[])reader.GetValue(2), reader.GetString(3)));
            }
        }

        if (parts.Count == 0)
        {
            return null;
        }

        // Frames of one stream share a bin width unless its settings changed during the day; keep the dominant one.
        var byWidth = new Dictionary<(double, int), double>();
        foreach (var p in parts)
        {
            var id = (p.BinWidthHz, p.Psd.Length);
            byWidth[id] = byWidth.GetValueOrDefault(id) + p.Seconds;
        }

        var best = byWidth.MaxBy(kv => (kv.Value, kv.Key.Item2)).Key;
        var bins = best.Item2 / sizeof(float);
        var sum = new double[bins];
        var seconds = 0.0;
        // By typed key, so the spellings stored for one line over time (e.g. "site:" and "site-tone:") add up.
        var lineSums = new Dictionary<FindingKey, (double SumHz, double Frames)>();
        foreach (var p in parts)
        {
            if (p.BinWidthHz != best.Item1 || p.Psd.Length != best.Item2)
            {
                continue;
            }

            for (var k = 0; k < bins; k++)
            {
                sum[k] += BinaryPrimitives.ReadSingleLittleEndian(p.Psd.AsSpan(k * sizeof(float))) * p.Seconds;
            }

            seconds += p.Seconds;
            var lines = JsonSerializer.Deserialize(p.Lines, SummaryJsonContext.Default.DictionaryStringDoubleArray) ?? [];
            foreach (var (text, pair) in lines)
            {
                if (pair.Length == 2)
                {
                    var key = FindingKey.Parse(text);
                    var s = lineSums.GetValueOrDefault(key);
                    lineSums[key] = (s.SumHz + pair[0], s.Frames + pair[1]);
                }
            }
        }

        var mean = new double[bins];
        for (var k = 0; k < bins; k++)
        {
            mean[k] = seconds > 0 ? sum[k] / seconds : 0;
        }

        var frequencies = new Dictionary<FindingKey, double>();
        foreach (var (key, s) in lineSums)
        {
            if (s.Frames > 0)
            {
                frequencies[key] = s.SumHz / s.Frames;
            }
        }

        return new DaySpectrum(best.Item1, seconds, mean, frequencies);
    }

    /// <summary>Ledger rows of one stream and UTC range, as the core summarizer reads them.</summary>
    public IReadOnlyList<LedgerMinute> LedgerMinutes(string stream, DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        var rows = _store.LedgerRows(stream, fromUtc, toUtc);
        var result = new LedgerMinute[rows.Count];
        for (var i = 0; i < rows.Count; i++)
        {
            var r = rows[i];
            result[i] = new LedgerMinute(r.MinuteUtc, r.SourceKey, r.MonitoredSeconds, r.AffectedSeconds, r.MaxUvRms, r.MedianUvRms, r.WorstChannels, r.MainsHz);
        }

        return result;
    }

    /// <summary>Alert events of all streams in a UTC range, grouped by stream.</summary>
    public Dictionary<string, List<AlertRecord>> AlertsByStream(DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        var result = new Dictionary<string, List<AlertRecord>>(StringComparer.Ordinal);
        foreach (var a in _store.AlertsBetween(fromUtc, toUtc))
        {
            if (!result.TryGetValue(a.Stream, out var list))
            {
                list = [];
                result.Add(a.Stream, list);
            }

            list.Add(new AlertRecord(a.Utc, a.Key, a.Event, a.Severity, a.FrequencyHz));
        }

        return result;
    }

    /// <summary>Streams with ledger rows in a UTC range, ordinal order.</summary>
    public IReadOnlyList<string> StreamsWithLedger(DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            using var command = _connection.CreateCommand();
            command.CommandText = """
                SELECT DISTINCT stream FROM minute_ledger WHERE minute_utc >= $from AND minute_utc < $to
                UNION SELECT DISTINCT stream FROM alerts WHERE utc_ms >= $fromMs AND utc_ms < $toMs
                ORDER BY 1
                """;
            command.Parameters.AddWithValue("$from", fromUtc.ToUnixTimeSeconds());
            command.Parameters.AddWithValue("$to", toUtc.ToUnixTimeSeconds());
            command.Parameters.AddWithValue("$fromMs", fromUtc.ToUnixTimeMilliseconds());
            command.Parameters.AddWithValue("$toMs", toUtc.ToUnixTimeMilliseconds());
            using var reader = command.ExecuteReader();
            var result = new List<string>();
            while (reader.Read())
            {
                result.Add(reader.GetString(0));
            }

            result.Sort(StringComparer.Ordinal);
            return result;
        }
    }

    /// <summary>Whether the summary of (day, zone, stream) was written; stream "" is the day's page.</summary>
    public bool IsRendered(DateOnly day, string zone, string stream)
    {
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            using var command = _connection.CreateCommand();
            command.CommandText = "SELECT count(*) FROM summary_renders WHERE day = $day AND zone = $zone AND stream = $stream";
            command.Parameters.AddWithValue("$day", DayText(day));
            command.Parameters.AddWithValue("$zone", zone);
            command.Parameters.AddWithValue("$stream", stream);
            return Convert.ToInt64(command.ExecuteScalar(), CultureInfo.InvariantCulture) > 0;
        }
    }

    /// <summary>Records that the summary of (day, zone, stream) was written (after its files are in place).</summary>
    public void MarkRendered(DateOnly day, string zone, string stream, DayVerdict? verdict)
    {
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            using var command = _connection.CreateCommand();
            command.CommandText = """
                INSERT INTO summary_renders (day, zone, stream, rendered_utc_ms, verdict) VALUES ($day, $zone, $stream, $utc, $verdict)
                ON CONFLICT (day, zone, stream) DO UPDATE SET rendered_utc_ms = excluded.rendered_utc_ms, verdict = excluded.verdict
                """;
            command.Parameters.AddWithValue("$day", DayText(day));
            command.Parameters.AddWithValue("$zone", zone);
            command.Parameters.AddWithValue("$stream", stream);
            command.Parameters.AddWithValue("$utc", _timeProvider.GetUtcNow().ToUnixTimeMilliseconds());
            command.Parameters.AddWithValue("$verdict", (object?)verdict?.ToText() ?? DBNull.Value);
            command.ExecuteNonQuery();
        }
    }

    /// <summary>How many summaries (streams, not pages) were recorded as written for a day.</summary>
    public int RenderedCount(DateOnly day, string zone)
    {
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            using var command = _connection.CreateCommand();
            command.CommandText = "SELECT count(*) FROM summary_renders WHERE day = $day AND zone = $zone AND stream <> ''";
            command.Parameters.AddWithValue("$day", DayText(day));
            command.Parameters.AddWithValue("$zone", zone);
            return Convert.ToInt32(command.ExecuteScalar(), CultureInfo.InvariantCulture);
        }
    }

    public void Dispose()
    {
        lock (_gate)
        {
            if (_disposed)
            {
                return;
            }

            _disposed = true;
            _connection.Dispose();
        }
    }

    private static string DayText(DateOnly day) => day.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture);
}
