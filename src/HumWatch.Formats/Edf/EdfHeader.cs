using System.Globalization;
using System.Text;

namespace HumWatch.Formats.Edf;

/// <summary>
/// The EDF/BDF header (Kemp et al. 1992; EDF+ Kemp &amp; Olivan 2003): a 256-byte fixed part, then ns × 256 bytes
/// stored field by field. Parsing checks every field a reader relies on and names the field in its error.
/// </summary>
internal sealed class EdfHeader
{
    /// <summary>Largest number of signals accepted; real recordings have a few hundred at most.</summary>
    public const int MaxSignals = 4096;

    /// <summary>Largest data record accepted (64 MiB): one record is held in memory at a time.</summary>
    public const long MaxRecordBytes = 64L * 1024 * 1024;

    public const int FixedBytes = 256;

    // Fixed-header fields: offset, width (EDF spec: Kemp et al., Electroencephalogr. Clin. Neurophysiol. 82:391–393, 1992).
    internal static readonly (int Offset, int Width, string Name)[] FixedFields =
    [
        (0, 8, "version"),
        (8, 80, "local patient identification"),
        (88, 80, "local recording identification"),
        (168, 8, "start date"),
        (176, 8, "start time"),
        (184, 8, "number of bytes in header"),
        (192, 44, "reserved"),
        (236, 8, "number of data records"),
        (244, 8, "duration of a data record"),
        (252, 4, "number of signals"),
    ];

    // Per-signal fields: width and name, in storage order; each block holds ns entries.
    internal static readonly (int Width, string Name)[] SignalFields =
    [
        (16, "label"),
        (80, "transducer type"),
        (8, "physical dimension"),
        (8, "physical minimum"),
        (8, "physical maximum"),
        (8, "digital minimum"),
        (8, "digital maximum"),
        (80, "prefiltering"),
        (8, "number of samples in each data record"),
        (32, "reserved"),
    ];

    private EdfHeader()
    {
    }

    public required bool IsBdf { get; init; }

    public required bool IsPlus { get; init; }

    public required bool IsDiscontinuous { get; init; }

    /// <summary>"EDF", "EDF+C", "EDF+D", "BDF", "BDF+C" or "BDF+D".</summary>
    public required string Format { get; init; }

    public required string PatientId { get; init; }

    public required string RecordingId { get; init; }

    public required DateTime? StartLocal { get; init; }

    public required int HeaderBytes { get; init; }

    /// <summary>Number of complete data records (derived from the file size when the header says −1).</summary>
    public required long RecordCount { get; init; }

    public required double RecordDurationSeconds { get; init; }

    public required IReadOnlyList<EdfSignalHeader> Signals { get; init; }

    public int BytesPerSample => IsBdf ? 3 : 2;

    public required long RecordBytes { get; init; }

    public required IReadOnlyList<string> Warnings { get; init; }

    /// <summary>Reads and checks the header from the start of <paramref name="stream"/>; leaves the stream positioned after it.</summary>
    public static EdfHeader Read(string path, Stream stream, bool isBdf)
    {
        var fileBytes = stream.Length;
        if (fileBytes < FixedBytes)
        {
            throw Fail(path, $"truncated header: file has {fileBytes} bytes, the fixed {(isBdf ? "BDF" : "EDF")} header alone needs {FixedBytes}");
        }

        var warnings = new List<string>();
        var fixedPart = new byte[FixedBytes];
        stream.Position = 0;
        stream.ReadExactly(fixedPart);

        var reserved = Field(fixedPart, 192, 44);
        var kind = isBdf ? "BDF" : "EDF";
        var isPlus = reserved.StartsWith(kind + "+C", StringComparison.Ordinal) || reserved.StartsWith(kind + "+D", StringComparison.Ordinal);
        var isDiscontinuous = isPlus && reserved.StartsWith(kind + "+D", StringComparison.Ordinal);
        if (isPlus)
        {
            // EDF+ 2003: header bytes are printable US-ASCII only (BDF's 0xFF version byte excepted).
            CheckAscii(path, fixedPart, isBdf ? 1 : 0, offset => FixedFieldAt(offset));
        }

        var nsField = ParseLong(path, Field(fixedPart, 252, 4), "number of signals (bytes 252-255)");
        if (nsField <= 0)
        {
            throw Fail(path, $"number of signals (bytes 252-255) is {nsField}; must be at least 1");
        }

        if (nsField > MaxSignals)
        {
            throw Fail(path, $"number of signals (bytes 252-255) is {nsField}; more than {MaxSignals} is not a plausible recording");
        }

        var ns = (int)nsField;

        var headerBytesField = ParseLong(path, Field(fixedPart, 184, 8), "number of bytes in header (bytes 184-191)");
        var expectedHeaderBytes = FixedBytes * (ns + 1);
        if (headerBytesField != expectedHeaderBytes)
        {
            throw Fail(path, $"number of bytes in header (bytes 184-191) is {headerBytesField}, but {ns} signals need 256 × ({ns} + 1) = {expectedHeaderBytes}");
        }

        if (fileBytes < expectedHeaderBytes)
        {
            throw Fail(path, $"truncated header: file has {fileBytes} bytes, the header of {ns} signals needs {expectedHeaderBytes}");
        }

        var signalPart = new byte[FixedBytes * ns];
        stream.ReadExactly(signalPart);
        if (isPlus)
        {
            CheckAscii(path, signalPart, 0, offset => SignalFieldAt(offset, ns));
        }

        var recordCountField = ParseLong(path, Field(fixedPart, 236, 8), "number of data records (bytes 236-243)");
        if (recordCountField < -1)
        {
            throw Fail(path, $"number of data records (bytes 236-243) is {recordCountField}; must be positive, or -1 while still recording");
        }

        if (recordCountField == 0)
        {
            throw Fail(path, "number of data records (bytes 236-243) is 0: the file holds no samples");
        }

        var durationText = Field(fixedPart, 244, 8);
        var duration = ParseDouble(path, durationText, "duration of a data record (bytes 244-251)");
        if (!(duration > 0) || !double.IsFinite(duration))
        {
            throw Fail(path, $"duration of a data record (bytes 244-251) is '{durationText.Trim()}'; must be a positive number of seconds");
        }

        var signals = ReadSignals(path, signalPart, ns, isBdf);
        long recordBytes = 0;
        foreach (var s in signals)
        {
            recordBytes += (long)s.SamplesPerRecord * (isBdf ? 3 : 2);
        }

        if (recordBytes > MaxRecordBytes)
        {
            throw Fail(path, $"a data record would be {recordBytes} bytes (sum of samples per record × {(isBdf ? 3 : 2)} bytes); more than {MaxRecordBytes} bytes (64 MiB) is not a plausible recording");
        }

        foreach (var s in signals)
        {
            // A tiny record duration makes any sample count an absurd (or infinite) rate; annotation "samples" are bytes.
            var rateHz = s.SamplesPerRecord / duration;
            if (!s.IsAnnotation && !(rateHz <= RecordingReader.MaxSampleRateHz))
            {
                throw Fail(path, string.Create(CultureInfo.InvariantCulture,
                    $"signal {s.Index + 1} of {ns} ('{s.Label}') has {s.SamplesPerRecord} samples per data record of '{durationText.Trim()}' s, {rateHz:G6} Hz; more than 1 MHz is not a plausible recording"));
            }
        }

        var dataBytes = fileBytes - expectedHeaderBytes;
        long recordCount;
        if (recordCountField == -1)
        {
            recordCount = dataBytes / recordBytes;
            var partial = dataBytes % recordBytes;
            if (recordCount == 0)
            {
                throw Fail(path, $"number of data records is -1 (still recording) and the file holds no complete data record yet ({dataBytes} of {recordBytes} bytes)");
            }

            warnings.Add($"number of data records is -1 (still recording); using the {recordCount} complete records in the file");
            if (partial != 0)
            {
                warnings.Add($"incomplete last data record ({partial} of {recordBytes} bytes) ignored");
            }
        }
        else
        {
            recordCount = recordCountField;
            var expectedFileBytes = expectedHeaderBytes + (recordCount * recordBytes);
            if (fileBytes < expectedFileBytes)
            {
                throw Fail(path, $"truncated file (size shorter than the header promises): expected {expectedFileBytes} bytes ({expectedHeaderBytes} header + {recordCount} data records × {recordBytes} bytes), found {fileBytes} bytes ({dataBytes / recordBytes} complete records)");
            }

            if (fileBytes > expectedFileBytes)
            {
                warnings.Add($"{fileBytes - expectedFileBytes} bytes after the last of the {recordCount} data records ignored");
            }
        }

        var patientId = Field(fixedPart, 8, 80).TrimEnd();
        var recordingId = Field(fixedPart, 88, 80).TrimEnd();
        var start = ParseStart(Field(fixedPart, 168, 8), Field(fixedPart, 176, 8), isPlus ? recordingId : null);
        if (start is null)
        {
            warnings.Add($"start date/time '{Field(fixedPart, 168, 8).Trim()} {Field(fixedPart, 176, 8).Trim()}' is not a valid dd.mm.yy hh.mm.ss; start unknown");
        }

        if (isDiscontinuous && !signals.Any(s => s.IsAnnotation))
        {
            throw Fail(path, $"{kind}+D file without an annotation signal: record start times are unknown");
        }

        return new EdfHeader
        {
            IsBdf = isBdf,
            IsPlus = isPlus,
            IsDiscontinuous = isDiscontinuous,
            Format = isPlus ? (isDiscontinuous ? kind + "+D" : kind + "+C") : kind,
            PatientId = patientId,
            RecordingId = recordingId,
            StartLocal = start,
            HeaderBytes = expectedHeaderBytes,
            RecordCount = recordCount,
            RecordDurationSeconds = duration,
            Signals = signals,
            RecordBytes = recordBytes,
            Warnings = warnings,
        };
    }

    private static EdfSignalHeader[] ReadSignals(string path, byte[] part, int ns, bool isBdf)
    {
        var blockStart = new int[SignalFields.Length];
        var offset = 0;
        for (var f = 0; f < SignalFields.Length; f++)
        {
            blockStart[f] = offset;
            offset += SignalFields[f].Width * ns;
        }

        string Get(int field, int signal) => Field(part, blockStart[field] + (signal * SignalFields[field].Width), SignalFields[field].Width);

        var (digitalLow, digitalHigh) = isBdf ? (-8_388_608, 8_388_607) : (-32_768, 32_767);
        var result = new EdfSignalHeader[ns];
        long byteOffset = 0;
        for (var i = 0; i < ns; i++)
        {
            var label = Get(0, i).Trim();
            var name = $"signal {i + 1} of {ns} ('{label}')";
            var isAnnotation = label is "EDF Annotations" or "BDF Annotations";
            var samples = ParseLong(path, Get(8, i), name + " number of samples in each data record");
            if (samples <= 0)
            {
                throw Fail(path, $"{name} number of samples in each data record is {samples}; must be at least 1");
            }

            if (samples * (isBdf ? 3 : 2) > MaxRecordBytes)
            {
                throw Fail(path, $"{name} number of samples in each data record is {samples}; a record of more than 64 MiB is not a plausible recording");
            }

            var physMin = ParseDouble(path, Get(3, i), name + " physical minimum");
            var physMax = ParseDouble(path, Get(4, i), name + " physical maximum");
            var digMin = ParseLong(path, Get(5, i), name + " digital minimum");
            var digMax = ParseLong(path, Get(6, i), name + " digital maximum");
            if (!isAnnotation)
            {
                // Annotation signals carry bytes, so their scaling fields are never used.
                if (digMax <= digMin)
                {
                    throw Fail(path, $"{name} digital maximum ({digMax}) must be greater than digital minimum ({digMin})");
                }

                if (digMin < digitalLow || digMax > digitalHigh)
                {
                    throw Fail(path, $"{name} digital range {digMin}..{digMax} does not fit the {(isBdf ? "24" : "16")}-bit samples ({digitalLow}..{digitalHigh})");
                }

                if (physMax == physMin)
                {
                    throw Fail(path, $"{name} physical maximum equals physical minimum ({physMin}); the scaling is undefined");
                }
            }

            result[i] = new EdfSignalHeader(
                Index: i,
                Label: label,
                Transducer: Get(1, i).Trim(),
                PhysicalDimension: Get(2, i).Trim(),
                PhysicalMin: physMin,
                PhysicalMax: physMax,
                DigitalMin: (int)Math.Clamp(digMin, int.MinValue, int.MaxValue),
                DigitalMax: (int)Math.Clamp(digMax, int.MinValue, int.MaxValue),
                Prefiltering: Get(7, i).Trim(),
                SamplesPerRecord: (int)samples,
                ByteOffsetInRecord: byteOffset,
                IsAnnotation: isAnnotation);
            byteOffset += samples * (isBdf ? 3 : 2);
        }

        return result;
    }

    /// <summary>dd.mm.yy hh.mm.ss; yy 85-99 → 19yy, 00-84 → 20yy; an EDF+ "Startdate dd-MMM-yyyy" gives the full year.</summary>
    internal static DateTime? ParseStart(string date, string time, string? plusRecordingId)
    {
        if (!TryTriple(date, out var day, out var month, out var yy) || !TryTriple(time, out var hour, out var minute, out var second))
        {
            return null;
        }

        var year = yy >= 85 ? 1900 + yy : 2000 + yy;
        if (plusRecordingId is not null && plusRecordingId.StartsWith("Startdate ", StringComparison.Ordinal))
        {
            var token = plusRecordingId.AsSpan(10);
            var end = token.IndexOf(' ');
            if (end >= 0)
            {
                token = token[..end];
            }

            if (DateTime.TryParseExact(token, "dd-MMM-yyyy", CultureInfo.InvariantCulture, DateTimeStyles.None, out var full))
            {
                year = full.Year;
            }
        }

        if (month is < 1 or > 12 || day < 1 || day > DateTime.DaysInMonth(year, month) || hour > 23 || minute > 59 || second > 59)
        {
            return null;
        }

        return new DateTime(year, month, day, hour, minute, second, DateTimeKind.Unspecified);
    }

    private static bool TryTriple(string text, out int a, out int b, out int c)
    {
        a = b = c = -1;
        var t = text.Trim();
        if (t.Length != 8 || t[2] != '.' || t[5] != '.')
        {
            return false;
        }

        return int.TryParse(t.AsSpan(0, 2), NumberStyles.None, CultureInfo.InvariantCulture, out a)
            && int.TryParse(t.AsSpan(3, 2), NumberStyles.None, CultureInfo.InvariantCulture, out b)
            && int.TryParse(t.AsSpan(6, 2), NumberStyles.None, CultureInfo.InvariantCulture, out c);
    }

    private static void CheckAscii(string path, byte[] bytes, int from, Func<int, string> fieldAt)
    {
        for (var i = from; i < bytes.Length; i++)
        {
            if (bytes[i] is < 32 or > 126)
            {
                throw Fail(path, $"non-ASCII byte 0x{bytes[i]:X2} in the {fieldAt(i)} field; EDF+/BDF+ headers must be printable ASCII (32-126)");
            }
        }
    }

    private static string FixedFieldAt(int offset)
    {
        foreach (var (o, w, name) in FixedFields)
        {
            if (offset >= o && offset < o + w)
            {
                return $"{name} (bytes {o}-{o + w - 1})";
            }
        }

        return "header";
    }

    private static string SignalFieldAt(int offset, int ns)
    {
        var start = 0;
        foreach (var (w, name) in SignalFields)
        {
            var blockBytes = w * ns;
            if (offset < start + blockBytes)
            {
                var signal = (offset - start) / w;
                return $"signal {signal + 1} of {ns} {name} (byte {FixedBytes + offset})";
            }

            start += blockBytes;
        }

        return "signal header";
    }

    /// <summary>Header text is ASCII; Latin-1 keeps any stray byte as one char so plain-EDF labels survive.</summary>
    private static string Field(byte[] bytes, int offset, int width) => Encoding.Latin1.GetString(bytes, offset, width);

    private static long ParseLong(string path, string text, string field)
    {
        var t = text.Trim();
        if (long.TryParse(t, NumberStyles.AllowLeadingSign | NumberStyles.AllowLeadingWhite | NumberStyles.AllowTrailingWhite, CultureInfo.InvariantCulture, out var value))
        {
            return value;
        }

        // Some writers put "256.0" or "-32768.00" in integer fields; accept whole numbers written that way.
        if (double.TryParse(t, NumberStyles.Float, CultureInfo.InvariantCulture, out var d) && d == Math.Floor(d) && Math.Abs(d) < 1e15)
        {
            return (long)d;
        }

        throw Fail(path, $"{field} is '{t}', not a whole number");
    }

    private static double ParseDouble(string path, string text, string field)
    {
        var t = text.Trim();
        if (double.TryParse(t, NumberStyles.Float, CultureInfo.InvariantCulture, out var value) && double.IsFinite(value))
        {
            return value;
        }

        throw Fail(path, $"{field} is '{t}', not a number");
    }

    private static RecordingFormatException Fail(string path, string problem) => new(path, problem);
}
