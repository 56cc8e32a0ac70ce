using System.Text;
using System.Text.Json;

namespace HumWatch.Formats.Wire;

/// <summary>Reads frame 1, the JSON header, into <see cref="WireHeaderFields"/>: syntax and per-field types here, what the fields mean together in <see cref="WireHeaderCheck"/>.</summary>
internal static class WireHeaderReader
{
    private const int MaxJsonDepth = 4;

    /// <summary>The field names in <see cref="WireField"/> order, as UTF-8 to compare against without decoding.</summary>
    private static readonly string[] FieldNames = ["v", "stream", "fs", "channels", "unit", "index", "t0"];

    private static readonly byte[][] FieldNamesUtf8 = [.. FieldNames.Select(Encoding.UTF8.GetBytes)];

    /// <summary>The reader of each field's value, in <see cref="WireField"/> order.</summary>
    private static readonly FieldReader[] FieldReaders = [ReadVersion, ReadStreamId, ReadRate, ReadChannels, ReadUnit, ReadIndex, ReadStartTime];

    private delegate void FieldReader(ref Utf8JsonReader reader, ref WireHeaderFields fields);

    /// <summary>Reads the header; null when it is a well-formed JSON object without repeated fields, else what is wrong with it.</summary>
    public static string? Parse(ReadOnlySpan<byte> header, ref WireHeaderFields fields)
    {
        if (header.IsEmpty)
        {
            return "header frame is empty";
        }

        try
        {
            var reader = new Utf8JsonReader(header, new JsonReaderOptions { MaxDepth = MaxJsonDepth });
            if (!reader.Read() || reader.TokenType != JsonTokenType.StartObject)
            {
                return "header is not a JSON object";
            }

            while (reader.Read() && reader.TokenType == JsonTokenType.PropertyName)
            {
                var repeated = ReadProperty(ref reader, ref fields);
                if (repeated is not null)
                {
                    return $"header field '{repeated}' appears more than once";
                }
            }

            // Anything after the closing brace other than whitespace makes the reader throw.
            if (reader.Read())
            {
                return "header has content after the JSON object";
            }

            return null;
        }
        catch (JsonException ex)
        {
            return $"header is not valid JSON ({ex.Message})";
        }
        catch (InvalidOperationException ex)
        {
            // Invalid UTF-8 inside a string surfaces here when the value is transcoded.
            return $"header is not valid UTF-8 JSON ({ex.Message})";
        }
    }

    /// <summary>Reads one property; returns its name when the header already had it.</summary>
    private static string? ReadProperty(ref Utf8JsonReader reader, ref WireHeaderFields fields)
    {
        var index = FieldNamesUtf8.Length - 1;
        while (index >= 0 && !reader.ValueTextEquals(FieldNamesUtf8[index]))
        {
            index--;
        }

        reader.Read();
        if (index < 0)
        {
            // Unknown fields are ignored so later minor additions stay readable by this version.
            reader.Skip();
            return null;
        }

        if (!fields.TryMarkPresent((WireField)index))
        {
            return FieldNames[index];
        }

        FieldReaders[index](ref reader, ref fields);
        return null;
    }

    private static void ReadVersion(ref Utf8JsonReader reader, ref WireHeaderFields fields)
    {
        if (reader.TokenType == JsonTokenType.Number && reader.TryGetInt64(out var version))
        {
            fields.Version = version;
            return;
        }

        fields.VersionText = reader.TokenType == JsonTokenType.String ? reader.GetString() : reader.TokenType.ToString();
        reader.Skip();
    }

    private static void ReadStreamId(ref Utf8JsonReader reader, ref WireHeaderFields fields)
    {
        if (reader.TokenType == JsonTokenType.String)
        {
            fields.StreamId = reader.GetString();
            return;
        }

        // Reported as BadStreamId by WireHeaderCheck: present but not a string.
        reader.Skip();
    }

    private static void ReadRate(ref Utf8JsonReader reader, ref WireHeaderFields fields)
    {
        if (reader.TokenType == JsonTokenType.Number && reader.TryGetDouble(out var rate))
        {
            fields.SampleRateHz = rate;
            return;
        }

        fields.FieldError(WireRejectReason.BadSampleRate, $"'fs' must be a number of Hz, not {reader.TokenType}");
        reader.Skip();
    }

    private static void ReadIndex(ref Utf8JsonReader reader, ref WireHeaderFields fields)
    {
        if (reader.TokenType == JsonTokenType.Number && reader.TryGetInt64(out var index) && index >= 0)
        {
            fields.Index = index;
            return;
        }

        fields.FieldError(WireRejectReason.BadIndex, "'index' must be a non-negative 64-bit integer");
        reader.Skip();
    }

    private static void ReadChannels(ref Utf8JsonReader reader, ref WireHeaderFields fields)
    {
        if (reader.TokenType != JsonTokenType.StartArray)
        {
            fields.FieldError(WireRejectReason.BadChannels, $"'channels' must be an array of labels, not {reader.TokenType}");
            reader.Skip();
            return;
        }

        var labels = new List<string>();
        var count = 0;
        while (reader.Read() && reader.TokenType != JsonTokenType.EndArray)
        {
            count++;
            if (reader.TokenType != JsonTokenType.String)
            {
                fields.FieldError(WireRejectReason.BadChannels, $"channel {count - 1} label must be a string, not {reader.TokenType}");
                reader.Skip();
                continue;
            }

            if (count > ChunkWireCodec.MaxChannels)
            {
                continue;
            }

            var label = reader.GetString()!;
            if (string.IsNullOrWhiteSpace(label))
            {
                fields.FieldError(WireRejectReason.BadChannels, $"channel {count - 1} label is empty");
            }

            labels.Add(label);
        }

        if (count > ChunkWireCodec.MaxChannels)
        {
            fields.FieldError(WireRejectReason.BadChannels, $"{count} channels, more than the limit of {ChunkWireCodec.MaxChannels}");
        }

        fields.Channels = labels;
    }

    private static void ReadUnit(ref Utf8JsonReader reader, ref WireHeaderFields fields)
    {
        if (reader.TokenType == JsonTokenType.String)
        {
            if (reader.ValueTextEquals("uV"u8) || reader.ValueTextEquals("µV"u8) || reader.ValueTextEquals("μV"u8))
            {
                fields.Unit = WireUnit.Microvolts;
                return;
            }

            if (reader.ValueTextEquals("mV"u8))
            {
                fields.Unit = WireUnit.Millivolts;
                return;
            }

            if (reader.ValueTextEquals("V"u8))
            {
                fields.Unit = WireUnit.Volts;
                return;
            }

            fields.FieldError(WireRejectReason.BadUnit, $"'unit' is '{ChunkWireCodec.Printable(reader.GetString()!)}', expected uV, mV or V");
            return;
        }

        fields.FieldError(WireRejectReason.BadUnit, $"'unit' must be a string (uV, mV or V), not {reader.TokenType}");
        reader.Skip();
    }

    private static void ReadStartTime(ref Utf8JsonReader reader, ref WireHeaderFields fields)
    {
        if (reader.TokenType == JsonTokenType.Null)
        {
            return;
        }

        if (reader.TokenType != JsonTokenType.String)
        {
            fields.FieldError(WireRejectReason.BadStartTime, $"'t0' must be an ISO-8601 string, not {reader.TokenType}");
            reader.Skip();
            return;
        }

        var text = reader.GetString()!;
        var timeStart = text.IndexOf('T', StringComparison.OrdinalIgnoreCase);
        var hasZone = timeStart > 0 && text.AsSpan(timeStart).IndexOfAny("Zz+-") > 0;
        if (!hasZone || !reader.TryGetDateTimeOffset(out var t0))
        {
            fields.FieldError(WireRejectReason.BadStartTime,
                $"'t0' is '{ChunkWireCodec.Printable(text)}', expected an ISO-8601 date and time with Z or an offset (e.g. 2025-03-01T08:00:00.000Z)");
            return;
        }

        fields.StartUtc = t0.ToUniversalTime();
    }
}
