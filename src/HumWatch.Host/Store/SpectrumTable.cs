using System.Buffers.Binary;
using System.Text.Json;
using System.Text.Json.Serialization;
using HumWatch.Core.Findings;
using HumWatch.Core.Summaries;

namespace HumWatch.Host.Store;

/// <summary>
/// The <c>spectrum_parts</c> table: additive parts of hourly mean spectra, the PSD as little-endian float32 and the
/// line frequency sums as JSON {"key": [sumHz, frames]}. A re-delivered part (same stream, session, sequence) is ignored.
/// </summary>
internal sealed class SpectrumTable(StoreConnection connection) : ISpectrumPartSink
{
    /// <summary>Stores one spectrum part.</summary>
    public void OnSpectrumPart(SpectrumPart part) => Add([part]);

    /// <summary>Stores spectrum parts in one transaction; returns how many were new.</summary>
    public int Add(IReadOnlyList<SpectrumPart> parts)
    {
        ArgumentNullException.ThrowIfNull(parts);
        return connection.Run(c =>
        {
            using var transaction = c.BeginTransaction();
            using var command = Sql.Command(c, """
                INSERT INTO spectrum_parts (stream, session, seq, hour_utc, bin_width_hz, seconds, psd, lines)
                VALUES (@stream, @session, @seq, @hour, @bin, @seconds, @psd, @lines)
                ON CONFLICT (stream, session, seq) DO NOTHING
                """, transaction);
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
                Sql.Add(command, "@stream", part.StreamId);
                Sql.Add(command, "@session", part.SessionId);
                Sql.Add(command, "@seq", part.Sequence);
                Sql.Add(command, "@hour", part.HourUtc.ToUnixTimeSeconds());
                Sql.Add(command, "@bin", part.BinWidthHz);
                Sql.Add(command, "@seconds", part.Seconds);
                Sql.Add(command, "@psd", blob);
                Sql.Add(command, "@lines", JsonSerializer.Serialize(lines, SpectrumLinesJsonContext.Output.DictionaryStringDoubleArray));
                added += command.ExecuteNonQuery();
            }

            transaction.Commit();
            return added;
        });
    }

    /// <summary>Parts of a stream whose hour starts in [fromUtc, toUtc), by hour, session and sequence.</summary>
    public IReadOnlyList<SpectrumPart> Between(string stream, DateTimeOffset fromUtc, DateTimeOffset toUtc) => connection.Run(c =>
    {
        using var command = Sql.Command(c, """
            SELECT stream, session, seq, hour_utc, bin_width_hz, seconds, psd, lines FROM spectrum_parts
            WHERE stream = @stream AND hour_utc >= @from AND hour_utc < @to
            ORDER BY hour_utc, session, seq
            """);
        Sql.AddStreamRange(command, stream, fromUtc.ToUnixTimeSeconds(), toUtc.ToUnixTimeSeconds());
        return Sql.ReadAll(command, static reader => new SpectrumPart(
            reader.GetString(0), reader.GetString(1), Sql.Int64(reader, 2), DateTimeOffset.FromUnixTimeSeconds(Sql.Int64(reader, 3)),
            reader.GetDouble(4), reader.GetDouble(5), Psd((byte[])reader.GetValue(6)), Lines(reader.GetString(7))));
    });

    private static float[] Psd(byte[] blob)
    {
        var psd = new float[blob.Length / sizeof(float)];
        for (var k = 0; k < psd.Length; k++)
        {
            psd[k] = BinaryPrimitives.ReadSingleLittleEndian(blob.AsSpan(k * sizeof(float)));
        }

        return psd;
    }

    /// <summary>By typed key, so spellings of one line stored over time (e.g. "site:" and "site-tone:") add up; malformed pairs are skipped.</summary>
    private static Dictionary<FindingKey, LineFrequencyTally> Lines(string json)
    {
        var result = new Dictionary<FindingKey, LineFrequencyTally>();
        foreach (var (text, pair) in JsonSerializer.Deserialize(json, SpectrumLinesJsonContext.Default.DictionaryStringDoubleArray) ?? [])
        {
            if (pair.Length == 2)
            {
                var key = FindingKey.Parse(text);
                var sum = result.GetValueOrDefault(key);
                result[key] = new LineFrequencyTally(sum.SumHz + pair[0], sum.Frames + (int)pair[1]);
            }
        }

        return result;
    }
}

/// <summary>The lines column, indented as it has always been written.</summary>
[JsonSourceGenerationOptions(WriteIndented = true)]
[JsonSerializable(typeof(Dictionary<string, double[]>))]
internal sealed partial class SpectrumLinesJsonContext : JsonSerializerContext
{
    /// <summary>The context the column is written with: source keys as themselves.</summary>
    public static SpectrumLinesJsonContext Output => field ??= new(Serialization.OutputText.JsonOptions(Default.Options));
}
