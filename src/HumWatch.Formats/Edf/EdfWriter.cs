using System.Buffers.Binary;
using System.Globalization;
using System.Runtime.InteropServices;
using System.Text;
using HumWatch.Formats.Edf;

namespace HumWatch.Formats;

/// <summary>
/// Streams an EDF, EDF+C, BDF or BDF+C file: the header first (record count −1), then one data record per
/// <see cref="WriteRecord"/>; <see cref="Dispose"/> writes the final record count into the header.
/// Physical values become digital as round((x − phys_min)/gain + dig_min), clamped to the digital range (NaN → dig_min).
/// </summary>
public sealed class EdfWriter : IDisposable
{
    private const int RecordCountOffset = 236;

    private readonly Stream _stream;
    private readonly bool _leaveOpen;
    private readonly EdfWriterOptions _options;
    private readonly bool _isBdf;
    private readonly bool _isPlus;
    private readonly int _bytesPerSample;
    private readonly int _samplesPerRecord;
    private readonly int _annotationBytes;
    private readonly double[] _inverseGain;
    private readonly double[] _digitalOffset;
    private readonly byte[] _record;
    private readonly Queue<(string Tal, int Bytes)> _pendingAnnotations = new();
    private bool _disposed;

    /// <summary>Creates (or overwrites) <paramref name="path"/> and writes the header.</summary>
    public EdfWriter(string path, EdfWriterOptions options)
        : this(new FileStream(path, FileMode.Create, FileAccess.ReadWrite, FileShare.Read, 1 << 20), options, leaveOpen: false)
    {
    }

    /// <summary>Writes to <paramref name="stream"/> from its current position (must be seekable to fix the record count at the end).</summary>
    public EdfWriter(Stream stream, EdfWriterOptions options, bool leaveOpen = false)
    {
        ArgumentNullException.ThrowIfNull(stream);
        ArgumentNullException.ThrowIfNull(options);
        _stream = stream;
        _leaveOpen = leaveOpen;
        _options = options;
        _isBdf = options.Kind is EdfFileKind.Bdf or EdfFileKind.BdfPlusC;
        _isPlus = options.Kind is EdfFileKind.EdfPlusC or EdfFileKind.BdfPlusC;
        _bytesPerSample = _isBdf ? 3 : 2;
        Validate(options, _isBdf, _isPlus);

        var signals = options.Signals;
        _inverseGain = new double[signals.Count];
        _digitalOffset = new double[signals.Count];
        var recordBytes = 0;
        for (var i = 0; i < signals.Count; i++)
        {
            var s = signals[i];

            // Scale with the values as printed in the header, so that readers reproduce the samples exactly.
            var physMin = ParseBack(FormatNumber(s.PhysicalMin, $"signal {i + 1} physical minimum"));
            var physMax = ParseBack(FormatNumber(s.PhysicalMax, $"signal {i + 1} physical maximum"));
            var gain = (physMax - physMin) / ((double)s.DigitalMax - s.DigitalMin);
            _inverseGain[i] = 1.0 / gain;
            _digitalOffset[i] = s.DigitalMin - (physMin / gain);
            _samplesPerRecord += s.SamplesPerRecord;
            recordBytes += s.SamplesPerRecord * _bytesPerSample;
        }

        _annotationBytes = _isPlus ? AnnotationSamples() * _bytesPerSample : 0;
        _record = new byte[recordBytes + _annotationBytes];
        var header = BuildHeader();
        _stream.Write(header);
    }

    /// <summary>Data records written so far.</summary>
    public long RecordCount { get; private set; }

    /// <summary>Physical samples expected by <see cref="WriteRecord"/>: the sum of all signals' samples per record.</summary>
    public int SamplesPerRecord => _samplesPerRecord;

    /// <summary>Annotations queued but not yet written (they go into the next records' annotation signal).</summary>
    public int PendingAnnotationCount => _pendingAnnotations.Count;

    /// <summary>
    /// Queues an annotation for the annotation signal of the next data record(s) (EDF+/BDF+ only).
    /// Annotations still pending when the writer is disposed are not written.
    /// </summary>
    /// <param name="onsetSeconds">Seconds from the recording start.</param>
    /// <param name="durationSeconds">Duration in seconds, or null.</param>
    /// <param name="text">UTF-8 text without the control bytes 0x00, 0x14, 0x15.</param>
    public void AddAnnotation(double onsetSeconds, double? durationSeconds, string text)
    {
        ObjectDisposedException.ThrowIf(_disposed, this);
        ArgumentNullException.ThrowIfNull(text);
        if (!_isPlus)
        {
            throw new InvalidOperationException("Annotations need an EDF+ or BDF+ file kind.");
        }

        if (!double.IsFinite(onsetSeconds))
        {
            throw new ArgumentOutOfRangeException(nameof(onsetSeconds), onsetSeconds, "Onset must be a finite number of seconds.");
        }

        if (durationSeconds is { } d && (!double.IsFinite(d) || d < 0))
        {
            throw new ArgumentOutOfRangeException(nameof(durationSeconds), durationSeconds, "Duration must be a finite number of seconds ≥ 0.");
        }

        if (text.AsSpan().IndexOfAny('\0', '\u0014', '\u0015') >= 0)
        {
            throw new ArgumentException("Annotation text must not contain the TAL control characters 0x00, 0x14 or 0x15.", nameof(text));
        }

        var tal = new StringBuilder();
        tal.Append(onsetSeconds < 0 ? '-' : '+').Append(Math.Abs(onsetSeconds).ToString("0.#######", CultureInfo.InvariantCulture));
        if (durationSeconds is { } duration)
        {
            tal.Append('\u0015').Append(duration.ToString("0.#######", CultureInfo.InvariantCulture));
        }

        tal.Append('\u0014').Append(text).Append('\u0014').Append('\0');
        var talText = tal.ToString();
        var bytes = Encoding.UTF8.GetByteCount(talText);
        if (bytes > _annotationBytes - TimeKeepingBytes(1e9))
        {
            throw new ArgumentOutOfRangeException(nameof(text), $"Annotation needs {bytes} bytes; a record holds {_annotationBytes} annotation bytes. Raise {nameof(EdfWriterOptions.AnnotationBytesPerRecord)}.");
        }

        _pendingAnnotations.Enqueue((talText, bytes));
    }

    /// <summary>Writes one data record: every signal's samples in signal order (signal 0's SamplesPerRecord values, then signal 1's, …), in physical units.</summary>
    public void WriteRecord(ReadOnlySpan<float> physical)
    {
        ObjectDisposedException.ThrowIf(_disposed, this);
        if (physical.Length != _samplesPerRecord)
        {
            throw new ArgumentOutOfRangeException(nameof(physical), physical.Length, $"A record holds exactly {_samplesPerRecord} samples (sum of samples per record of all signals).");
        }

        var signals = _options.Signals;
        var src = 0;
        var dst = 0;
        for (var i = 0; i < signals.Count; i++)
        {
            var s = signals[i];
            var inverse = _inverseGain[i];
            var offset = _digitalOffset[i];
            double low = s.DigitalMin;
            double high = s.DigitalMax;
            var values = physical.Slice(src, s.SamplesPerRecord);
            var bytes = _record.AsSpan(dst, s.SamplesPerRecord * _bytesPerSample);
            if (_isBdf)
            {
                for (var j = 0; j < values.Length; j++)
                {
                    var digital = ToDigital(values[j], inverse, offset, low, high);
                    bytes[j * 3] = (byte)digital;
                    bytes[(j * 3) + 1] = (byte)(digital >> 8);
                    bytes[(j * 3) + 2] = (byte)(digital >> 16);
                }
            }
            else if (BitConverter.IsLittleEndian)
            {
                var shorts = MemoryMarshal.Cast<byte, short>(bytes);
                for (var j = 0; j < values.Length; j++)
                {
                    shorts[j] = (short)ToDigital(values[j], inverse, offset, low, high);
                }
            }
            else
            {
                for (var j = 0; j < values.Length; j++)
                {
                    BinaryPrimitives.WriteInt16LittleEndian(bytes.Slice(j * 2, 2), (short)ToDigital(values[j], inverse, offset, low, high));
                }
            }

            src += s.SamplesPerRecord;
            dst += bytes.Length;
        }

        if (_isPlus)
        {
            WriteAnnotationSignal(_record.AsSpan(dst, _annotationBytes));
        }

        _stream.Write(_record);
        RecordCount++;
    }

    private static int ToDigital(float value, double inverseGain, double offset, double low, double high)
    {
        var d = Math.Round((value * inverseGain) + offset);
        if (!(d >= low))
        {
            // Also catches NaN, which has no digital code.
            return (int)low;
        }

        return d > high ? (int)high : (int)d;
    }

    public void Dispose()
    {
        if (_disposed)
        {
            return;
        }

        _disposed = true;
        try
        {
            if (_stream.CanSeek)
            {
                var end = _stream.Position;
                var headerStart = end - (RecordCount * _record.Length) - HeaderBytes;
                _stream.Position = headerStart + RecordCountOffset;
                _stream.Write(Encoding.ASCII.GetBytes(Pad(RecordCount.ToString(CultureInfo.InvariantCulture), 8)));
                _stream.Position = end;
            }

            _stream.Flush();
        }
        finally
        {
            if (!_leaveOpen)
            {
                _stream.Dispose();
            }
        }
    }

    private int HeaderBytes => 256 * (_options.Signals.Count + (_isPlus ? 2 : 1));

    private void WriteAnnotationSignal(Span<byte> target)
    {
        target.Clear();

        // Every EDF+ record starts with its time-keeping TAL: "+onset" 0x14 0x14 0x00.
        var onset = RecordCount * _options.RecordDurationSeconds;
        var keeping = "+" + onset.ToString("0.#######", CultureInfo.InvariantCulture) + "\u0014\u0014\0";
        var used = Encoding.ASCII.GetBytes(keeping, target);
        while (_pendingAnnotations.Count > 0 && used + _pendingAnnotations.Peek().Bytes <= target.Length)
        {
            used += Encoding.UTF8.GetBytes(_pendingAnnotations.Dequeue().Tal, target[used..]);
        }
    }

    private static int TimeKeepingBytes(double onsetSeconds) => onsetSeconds.ToString("0.#######", CultureInfo.InvariantCulture).Length + 4;

    private int AnnotationSamples()
    {
        var bytes = Math.Max(_options.AnnotationBytesPerRecord, 32);
        return (bytes + _bytesPerSample - 1) / _bytesPerSample;
    }

    private byte[] BuildHeader()
    {
        var signals = _options.Signals;
        var ns = signals.Count + (_isPlus ? 1 : 0);
        var header = new byte[256 * (ns + 1)];
        header.AsSpan().Fill((byte)' ');
        var start = _options.StartLocal;
        if (_isBdf)
        {
            header[0] = 0xFF;
            Encoding.ASCII.GetBytes("BIOSEMI", header.AsSpan(1));
        }
        else
        {
            header[0] = (byte)'0';
        }

        var recording = _isPlus
            ? "Startdate " + start.ToString("dd-MMM-yyyy", CultureInfo.InvariantCulture).ToUpperInvariant() + " " + _options.RecordingInfo
            : _options.RecordingInfo;
        Put(header, 8, 80, _options.PatientId, "patient identification");
        Put(header, 88, 80, recording, "recording identification");
        Put(header, 168, 8, start.ToString("dd.MM.yy", CultureInfo.InvariantCulture), "start date");
        Put(header, 176, 8, start.ToString("HH.mm.ss", CultureInfo.InvariantCulture), "start time");
        Put(header, 184, 8, header.Length.ToString(CultureInfo.InvariantCulture), "header bytes");
        Put(header, 192, 44, _options.Kind switch
        {
            EdfFileKind.EdfPlusC => "EDF+C",
            EdfFileKind.BdfPlusC => "BDF+C",
            EdfFileKind.Bdf => "24BIT",
            _ => "",
        }, "reserved");
        Put(header, 236, 8, "-1", "number of data records");
        Put(header, 244, 8, FormatNumber(_options.RecordDurationSeconds, "record duration"), "record duration");
        Put(header, 252, 4, ns.ToString(CultureInfo.InvariantCulture), "number of signals");

        var offset = 256;
        void Column(int width, Func<int, string> valueOf, string name)
        {
            for (var i = 0; i < ns; i++)
            {
                Put(header, offset + (i * width), width, valueOf(i), name);
            }

            offset += width * ns;
        }

        var annotationLabel = _isBdf ? "BDF Annotations" : "EDF Annotations";
        var annotationSamples = _isPlus ? AnnotationSamples() : 0;
        bool IsAnn(int i) => i >= signals.Count;
        Column(16, i => IsAnn(i) ? annotationLabel : signals[i].Label, "label");
        Column(80, i => IsAnn(i) ? "" : signals[i].Transducer, "transducer");
        Column(8, i => IsAnn(i) ? "" : signals[i].PhysicalDimension, "physical dimension");
        Column(8, i => IsAnn(i) ? "-1" : FormatNumber(signals[i].PhysicalMin, "physical minimum"), "physical minimum");
        Column(8, i => IsAnn(i) ? "1" : FormatNumber(signals[i].PhysicalMax, "physical maximum"), "physical maximum");
        Column(8, i => IsAnn(i) ? (_isBdf ? "-8388608" : "-32768") : signals[i].DigitalMin.ToString(CultureInfo.InvariantCulture), "digital minimum");
        Column(8, i => IsAnn(i) ? (_isBdf ? "8388607" : "32767") : signals[i].DigitalMax.ToString(CultureInfo.InvariantCulture), "digital maximum");
        Column(80, i => IsAnn(i) ? "" : signals[i].Prefiltering, "prefiltering");
        Column(8, i => (IsAnn(i) ? annotationSamples : signals[i].SamplesPerRecord).ToString(CultureInfo.InvariantCulture), "samples per record");
        Column(32, _ => "", "reserved");
        return header;
    }

    private static void Validate(EdfWriterOptions options, bool isBdf, bool isPlus)
    {
        if (options.Signals is null || options.Signals.Count == 0)
        {
            throw new ArgumentOutOfRangeException(nameof(options), "At least one signal is required.");
        }

        if (options.Signals.Count > EdfHeader.MaxSignals - 1)
        {
            throw new ArgumentOutOfRangeException(nameof(options), options.Signals.Count, $"At most {EdfHeader.MaxSignals - 1} signals.");
        }

        if (!double.IsFinite(options.RecordDurationSeconds) || options.RecordDurationSeconds <= 0)
        {
            throw new ArgumentOutOfRangeException(nameof(options), options.RecordDurationSeconds, "RecordDurationSeconds must be positive and finite.");
        }

        if (isPlus && options.AnnotationBytesPerRecord is < 32 or > 65536)
        {
            throw new ArgumentOutOfRangeException(nameof(options), options.AnnotationBytesPerRecord, "AnnotationBytesPerRecord must be in [32, 65536].");
        }

        var (low, high) = isBdf ? (-8_388_608, 8_388_607) : (-32_768, 32_767);
        long recordBytes = 0;
        foreach (var s in options.Signals)
        {
            if (s.SamplesPerRecord <= 0)
            {
                throw new ArgumentOutOfRangeException(nameof(options), s.SamplesPerRecord, $"Signal '{s.Label}': SamplesPerRecord must be at least 1.");
            }

            if (s.DigitalMax <= s.DigitalMin || s.DigitalMin < low || s.DigitalMax > high)
            {
                throw new ArgumentOutOfRangeException(nameof(options), $"Signal '{s.Label}': digital range {s.DigitalMin}..{s.DigitalMax} must be increasing and within {low}..{high}.");
            }

            if (!double.IsFinite(s.PhysicalMin) || !double.IsFinite(s.PhysicalMax) || s.PhysicalMin == s.PhysicalMax)
            {
                throw new ArgumentOutOfRangeException(nameof(options), $"Signal '{s.Label}': physical minimum and maximum must be finite and different.");
            }

            recordBytes += (long)s.SamplesPerRecord * (isBdf ? 3 : 2);
        }

        if (recordBytes > EdfHeader.MaxRecordBytes)
        {
            throw new ArgumentOutOfRangeException(nameof(options), recordBytes, "A data record may hold at most 64 MiB.");
        }
    }

    /// <summary>Shortest invariant text of at most 8 characters without exponent.</summary>
    internal static string FormatNumber(double value, string what)
    {
        var text = value.ToString("R", CultureInfo.InvariantCulture);
        if (text.Length <= 8 && !text.Contains('E', StringComparison.Ordinal))
        {
            return text;
        }

        for (var decimals = 7; decimals >= 0; decimals--)
        {
            text = value.ToString("0." + new string('#', decimals), CultureInfo.InvariantCulture);
            if (text.Length <= 8)
            {
                return text;
            }
        }

        throw new ArgumentOutOfRangeException(what, value, "Does not fit the 8-character EDF number field.");
    }

    private static double ParseBack(string text) => double.Parse(text, NumberStyles.Float, CultureInfo.InvariantCulture);

    private static void Put(byte[] header, int offset, int width, string value, string field)
    {
        foreach (var ch in value)
        {
            if (ch is < ' ' or > '~')
            {
                throw new ArgumentException($"Header field '{field}' must be printable ASCII: '{value}'.", nameof(value));
            }
        }

        if (value.Length > width)
        {
            throw new ArgumentException($"Header field '{field}' holds at most {width} characters: '{value}'.", nameof(value));
        }

        Encoding.ASCII.GetBytes(value, header.AsSpan(offset, width));
    }

    private static string Pad(string value, int width) => value.PadRight(width);
}
