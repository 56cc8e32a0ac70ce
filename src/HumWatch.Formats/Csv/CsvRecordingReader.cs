using System.Globalization;
using System.Text;
using HumWatch.Core.Signals;

namespace HumWatch.Formats.Csv;

/// <summary>
/// Reads a delimited text recording: a header row whose first column is time (seconds, or milliseconds when named
/// "time_ms" or suffixed "[ms]"), then one column per channel in µV. A first column with another header ("Zeit (s)",
/// "tiempo", "Время", empty) is still the time column when its first rows rise in equal steps; otherwise the error
/// lists the headers seen. A channel header may carry a unit suffix,
/// "Fp1 [uV]" or "Cz (mV)", and is converted to µV (uV/µV/mV/V/nV); columns with a non-voltage unit are skipped.
/// Separator: comma, or semicolon or tab when the header uses that one alone. "NaN" is accepted as a sample (the
/// analysis flags non-finite samples); anything else that is not a number is an error naming line and column.
/// The sample rate is 1/Δt from the time column (snapped to a whole Hz within 0.01 %); every step must match it within
/// 0.1 % or within the precision the times are written with.
/// </summary>
internal sealed class CsvRecordingReader : IRecordingReader
{
    /// <summary>Rows used to estimate the sample interval at open.</summary>
    private const int RateProbeRows = 1000;

    private const double StepTolerance = 0.001;

    private readonly string _path;
    private readonly char _separator;
    private readonly int _columnCount;
    private readonly double _timeFactorSeconds;
    private readonly int[] _channelColumns;
    private readonly double[] _channelFactors;
    private readonly double _intervalSeconds;
    private readonly StreamLayout _layout;

    private CsvRecordingReader(string path, char separator, int columnCount, double timeFactorSeconds, int[] channelColumns, double[] channelFactors, double intervalSeconds, RecordingInfo info)
    {
        _path = path;
        _separator = separator;
        _columnCount = columnCount;
        _timeFactorSeconds = timeFactorSeconds;
        _channelColumns = channelColumns;
        _channelFactors = channelFactors;
        _intervalSeconds = intervalSeconds;
        Info = info;
        _layout = info.Groups[0].Layout;
    }

    public RecordingInfo Info { get; }

    public IReadOnlyList<RecordingAnnotation> Annotations { get; } = [];

    public static CsvRecordingReader Open(string path, RecordingReadOptions options)
    {
        try
        {
            using var reader = OpenText(path);
            var headerLine = reader.ReadLine();
            var lineNumber = 1;
            while (headerLine is not null && headerLine.Trim().Length == 0)
            {
                headerLine = reader.ReadLine();
                lineNumber++;
            }

            if (headerLine is null)
            {
                throw new RecordingFormatException(path, "empty file: no header row");
            }

            var headerLineNumber = lineNumber;
            var separator = DetectSeparator(path, headerLine, lineNumber);
            var names = headerLine.Split(separator);
            if (names.Length < 2)
            {
                throw new RecordingFormatException(path, $"line {lineNumber}: header has {names.Length} column; need a time column and at least one channel");
            }

            // One pass at open: the first rows give the time column and its sample interval, the row count the duration.
            var probe = new TimeProbe(Math.Min(RateProbeRows, 64));
            long rows = 0;
            string? line;
            while ((line = reader.ReadLine()) is not null)
            {
                lineNumber++;
                if (line.Length == 0 || line.AsSpan().Trim().Length == 0)
                {
                    continue;
                }

                if (rows < RateProbeRows)
                {
                    var end = line.IndexOf(separator, StringComparison.Ordinal);
                    probe.Add(end < 0 ? line.AsSpan() : line.AsSpan(0, end), lineNumber, separator);
                }

                rows++;
            }

            if (rows == 0)
            {
                throw new RecordingFormatException(path, "header only: no data rows");
            }

            if (rows == 1)
            {
                throw new RecordingFormatException(path, "only one data row: at least two are needed to derive the sample rate");
            }

            var timeHeader = Unquote(names[0]);
            var (timeName, timeUnit) = SplitUnit(timeHeader);
            var timeFactor = TimeFactor(timeName, timeUnit);
            var byContent = false;
            if (timeFactor is null)
            {
                // Exports name the time column in many languages, or not at all: a first column of steadily increasing
                // numbers is the time, in seconds unless its unit says otherwise.
                var unitFactor = timeUnit is null ? 1.0 : TimeUnitFactor(timeUnit);
                var why = unitFactor is null ? $"its unit '{timeUnit}' is not a time unit" : probe.WhyNotSteady();
                if (why is not null || unitFactor is null)
                {
                    var seen = string.Join(", ", names.Select(n => $"'{Unquote(n)}'"));
                    throw new RecordingFormatException(path, $"line {headerLineNumber}, column 1: '{timeHeader}' is not a time column: the first column must hold steadily increasing times in seconds, but {why}; headers seen: {seen}");
                }

                timeFactor = unitFactor;
                byContent = true;
            }
            else
            {
                probe.ThrowIfUnparsed(path, timeHeader);
            }

            var channels = new List<ChannelInfo>();
            var columns = new List<int>();
            var factors = new List<double>();
            var skipped = new List<SkippedSignal>();
            for (var i = 1; i < names.Length; i++)
            {
                var (label, unit) = SplitUnit(Unquote(names[i]));
                if (label.Length == 0)
                {
                    throw new RecordingFormatException(path, $"line {headerLineNumber}, column {i + 1}: empty channel name");
                }

                var factor = 1.0;
                if (unit is not null && !VoltageUnits.TryGetFactorToUv(unit, out factor))
                {
                    skipped.Add(new SkippedSignal(i, label, $"unit '{unit}' is not a voltage"));
                    continue;
                }

                channels.Add(new ChannelInfo(label));
                columns.Add(i);
                factors.Add(factor);
            }

            if (channels.Count == 0)
            {
                throw new RecordingFormatException(path, $"line {headerLineNumber}: no channel column in a voltage unit");
            }

            var interval = probe.MeanStep * timeFactor.Value;
            if (!(interval > 0) || !double.IsFinite(interval))
            {
                throw new RecordingFormatException(path, "time column does not increase over the first rows; cannot derive a sample rate");
            }

            var rateHz = 1.0 / interval;
            var whole = Math.Round(rateHz);
            if (whole > 0 && Math.Abs(rateHz - whole) <= 1e-4 * rateHz)
            {
                rateHz = whole;
                interval = 1.0 / whole;
            }

            if (rateHz < options.MinAnalysisRateHz)
            {
                var from = byContent ? $"taking column 1 '{timeHeader}' as time in seconds" : "from the time column";
                throw new RecordingFormatException(path, string.Create(CultureInfo.InvariantCulture, $"sample rate {rateHz:0.###} Hz ({from}) is below the analysis minimum of {options.MinAnalysisRateHz:0.###} Hz"));
            }

            var layout = new StreamLayout(rateHz, channels);
            var info = new RecordingInfo(path, "CSV", null, rows / rateHz, [new SignalGroup(0, layout, columns.ToArray())], skipped, null);
            return new CsvRecordingReader(path, separator, names.Length, timeFactor.Value, [.. columns], [.. factors], interval, info);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new RecordingFormatException(path, RecordingReader.DescribeOpenFailure(ex), ex);
        }
    }

    public IEnumerable<GroupChunk> ReadChunks(double chunkSeconds = 2.0)
    {
        if (!double.IsFinite(chunkSeconds) || chunkSeconds <= 0 || chunkSeconds > 3600)
        {
            throw new ArgumentOutOfRangeException(nameof(chunkSeconds), chunkSeconds, "Chunk length must be in (0, 3600] seconds.");
        }

        return ReadChunksCore(chunkSeconds);
    }

    public void Dispose()
    {
        // Each enumeration opens and closes its own reader; nothing is held between calls.
    }

    private IEnumerable<GroupChunk> ReadChunksCore(double chunkSeconds)
    {
        var channelCount = _channelColumns.Length;
        var capacity = (int)Math.Clamp(Math.Round(chunkSeconds * _layout.SampleRateHz), 1, 16 * 1024 * 1024 / channelCount);
        var columnToChannel = new int[_columnCount];
        Array.Fill(columnToChannel, -1);
        for (var c = 0; c < channelCount; c++)
        {
            columnToChannel[_channelColumns[c]] = c;
        }

        StreamReader reader;
        try
        {
            reader = OpenText(_path);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new RecordingFormatException(_path, RecordingReader.DescribeOpenFailure(ex), ex);
        }

        using (reader)
        {
            var lineNumber = 0;
            string? line;
            do
            {
                line = reader.ReadLine();
                lineNumber++;
            }
            while (line is not null && line.Trim().Length == 0);

            var names = line!.Split(_separator);
            float[]? buffer = null;
            var filled = 0;
            long firstIndex = 0;
            long rowIndex = 0;
            var previousTime = double.NaN;
            var previousDecimals = 0;
            while ((line = ReadLineChecked(reader, lineNumber)) is not null)
            {
                lineNumber++;
                if (line.AsSpan().Trim().Length == 0)
                {
                    continue;
                }

                buffer ??= new float[capacity * channelCount];
                var span = line.AsSpan();
                var column = 0;
                foreach (var range in span.Split(_separator))
                {
                    if (column >= _columnCount)
                    {
                        column++;
                        continue;
                    }

                    var field = span[range];
                    if (column == 0)
                    {
                        var t = ParseNumber(_path, field, lineNumber, 1, Unquote(names[0]), _separator) * _timeFactorSeconds;
                        var decimals = Decimals(field);
                        if (rowIndex > 0)
                        {
                            CheckStep(t - previousTime, Math.Max(decimals, previousDecimals), lineNumber);
                        }

                        previousTime = t;
                        previousDecimals = decimals;
                    }
                    else if (columnToChannel[column] >= 0)
                    {
                        var c = columnToChannel[column];
                        var value = ParseNumber(_path, field, lineNumber, column + 1, Unquote(names[column]), _separator);
                        buffer[(c * capacity) + filled] = (float)(value * _channelFactors[c]);
                    }

                    column++;
                }

                if (column != _columnCount)
                {
                    throw new RecordingFormatException(_path, $"line {lineNumber}: {column} fields, but the header has {_columnCount} columns");
                }

                filled++;
                rowIndex++;
                if (filled == capacity)
                {
                    yield return new GroupChunk(0, new SampleChunk(_layout, firstIndex, filled, buffer));
                    firstIndex += filled;
                    filled = 0;
                    buffer = null;
                }
            }

            if (filled > 0)
            {
                for (var c = 1; c < channelCount; c++)
                {
                    Array.Copy(buffer!, c * capacity, buffer!, c * filled, filled);
                }

                yield return new GroupChunk(0, new SampleChunk(_layout, firstIndex, filled, buffer!));
            }
        }
    }

    private string? ReadLineChecked(StreamReader reader, int lineNumber)
    {
        try
        {
            return reader.ReadLine();
        }
        catch (IOException ex)
        {
            throw new RecordingFormatException(_path, $"read error after line {lineNumber}: {ex.Message}", ex);
        }
    }

    private void CheckStep(double stepSeconds, int decimals, int lineNumber)
    {
        // Times printed with few decimals (0.0039 for 256 Hz) carry rounding of one unit in the last place.
        var quantum = Math.Pow(10, -decimals) * _timeFactorSeconds;
        var tolerance = Math.Max(StepTolerance * _intervalSeconds, quantum * 1.000001);
        if (Math.Abs(stepSeconds - _intervalSeconds) > tolerance)
        {
            throw new RecordingFormatException(_path, string.Create(CultureInfo.InvariantCulture,
                $"line {lineNumber}, column 1: time step {stepSeconds:0.#########} s differs from the sample interval {_intervalSeconds:0.#########} s ({1 / _intervalSeconds:0.###} Hz) by more than 0.1 %; samples must be uniformly spaced"));
        }
    }

    private static int Decimals(ReadOnlySpan<char> field)
    {
        var dot = field.IndexOfAny('.', ',');
        if (dot < 0)
        {
            return 0;
        }

        var e = field.IndexOfAny('e', 'E');
        var end = e < 0 ? field.Trim().Length : e;
        return Math.Max(0, end - dot - 1);
    }

    private static StreamReader OpenText(string path) =>
        new(new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete, 1 << 16, FileOptions.SequentialScan), Encoding.UTF8, detectEncodingFromByteOrderMarks: true);

    private static char DetectSeparator(string path, string header, int lineNumber)
    {
        var commas = header.Count(ch => ch == ',');
        var semicolons = header.Count(ch => ch == ';');
        var tabs = header.Count(ch => ch == '\t');
        var kinds = (commas > 0 ? 1 : 0) + (semicolons > 0 ? 1 : 0) + (tabs > 0 ? 1 : 0);
        if (kinds > 1)
        {
            throw new RecordingFormatException(path, $"line {lineNumber}: header mixes separators ({commas} commas, {semicolons} semicolons, {tabs} tabs); use one of them");
        }

        return semicolons > 0 ? ';' : tabs > 0 ? '\t' : ',';
    }

    private static double ParseNumber(string path, ReadOnlySpan<char> field, int lineNumber, int column, string columnName, char separator)
    {
        if (TryParseNumber(field, separator, out var value))
        {
            return value;
        }

        throw new RecordingFormatException(path, $"line {lineNumber}, column {column} ('{columnName}'): '{Shown(field)}' is not a number");
    }

    private static bool TryParseNumber(ReadOnlySpan<char> field, char separator, out double value)
    {
        var text = field.Trim();
        if (text.Length >= 2 && text[0] == '"' && text[^1] == '"')
        {
            text = text[1..^1].Trim();
        }

        if (double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out value) && !double.IsInfinity(value))
        {
            return true;
        }

        // Semicolon-separated files often come with decimal commas.
        if (separator == ';' && text.Contains(','))
        {
            Span<char> copy = stackalloc char[Math.Min(text.Length, 128)];
            if (text.Length <= copy.Length)
            {
                text.CopyTo(copy);
                copy.Replace(',', '.');
                if (double.TryParse(copy, NumberStyles.Float, CultureInfo.InvariantCulture, out value) && !double.IsInfinity(value))
                {
                    return true;
                }
            }
        }

        value = double.NaN;
        return false;
    }

    private static string Shown(ReadOnlySpan<char> field)
    {
        var text = field.Trim();
        return text.Length > 40 ? string.Concat(text[..40], "…") : text.ToString();
    }

    private static string Unquote(string name)
    {
        var t = name.Trim();
        return t.Length >= 2 && t[0] == '"' && t[^1] == '"' ? t[1..^1].Trim() : t;
    }

    /// <summary>"Cz (mV)" → ("Cz", "mV"); "Fp1 [uV]" → ("Fp1", "uV"); "O1" → ("O1", null).</summary>
    internal static (string Name, string? Unit) SplitUnit(string header)
    {
        var t = header.Trim();
        if (t.Length > 2 && (t[^1] == ']' || t[^1] == ')'))
        {
            var open = t.LastIndexOf(t[^1] == ']' ? '[' : '(');
            if (open > 0)
            {
                return (t[..open].Trim(), t[(open + 1)..^1].Trim());
            }
        }

        return (t, null);
    }

    /// <summary>Seconds per unit for a time unit written after any column name ("Zeit (s)", "Время [мс]"), else null.</summary>
    private static double? TimeUnitFactor(string unit) => unit.ToUpperInvariant() switch
    {
        "S" or "SEC" or "SECS" or "SECONDS" or "С" or "СЕК" => 1.0,
        "MS" or "MSEC" or "МС" => 1e-3,
        _ => null,
    };

    /// <summary>Seconds per unit of the time column, or null when the column is not a time column.</summary>
    private static double? TimeFactor(string name, string? unit)
    {
        var n = name.ToUpperInvariant();
        if (unit is not null)
        {
            if (n is not ("TIME" or "T"))
            {
                return null;
            }

            return unit.ToUpperInvariant() switch
            {
                "S" or "SEC" or "SECONDS" => 1.0,
                "MS" => 1e-3,
                _ => null,
            };
        }

        return n switch
        {
            "TIME" or "T" or "TIME_S" or "TIME_SEC" or "SECONDS" or "SEC" or "S" => 1.0,
            "TIME_MS" or "MS" => 1e-3,
            _ => null,
        };
    }

    /// <summary>The first column of the first rows, as read at open: its values, how they are written, where.</summary>
    private sealed class TimeProbe(int capacity)
    {
        private readonly List<double> _values = new(capacity);
        private readonly List<int> _decimals = new(capacity);
        private readonly List<int> _lines = new(capacity);
        private int _unparsedLine;
        private string _unparsedText = "";

        /// <summary>Mean step over the parsed rows, in the column's unit (NaN with fewer than two).</summary>
        public double MeanStep => _values.Count >= 2 ? (_values[^1] - _values[0]) / (_values.Count - 1) : double.NaN;

        public void Add(ReadOnlySpan<char> field, int lineNumber, char separator)
        {
            if (_unparsedLine > 0)
            {
                return;
            }

            if (!TryParseNumber(field, separator, out var value))
            {
                _unparsedLine = lineNumber;
                _unparsedText = Shown(field);
                return;
            }

            _values.Add(value);
            _decimals.Add(Decimals(field));
            _lines.Add(lineNumber);
        }

        /// <summary>For a column the header names as time: a value that is not a number is an error, as in any column.</summary>
        public void ThrowIfUnparsed(string path, string header)
        {
            if (_unparsedLine > 0)
            {
                throw new RecordingFormatException(path, $"line {_unparsedLine}, column 1 ('{header}'): '{_unparsedText}' is not a number");
            }
        }

        /// <summary>Null when the values rise in equal steps (within 0.1 % or one unit of their last printed decimal), else why not.</summary>
        public string? WhyNotSteady()
        {
            if (_unparsedLine > 0)
            {
                return $"line {_unparsedLine} holds '{_unparsedText}', not a number";
            }

            if (_values.Count < 3)
            {
                return $"{_values.Count} rows are too few to show a steady step (3 needed)";
            }

            var mean = MeanStep;
            for (var i = 1; i < _values.Count; i++)
            {
                var step = _values[i] - _values[i - 1];
                if (!(step > 0))
                {
                    return string.Create(CultureInfo.InvariantCulture, $"line {_lines[i]} has {_values[i]:G10} after {_values[i - 1]:G10}");
                }

                var quantum = Math.Pow(10, -Math.Max(_decimals[i], _decimals[i - 1]));
                if (Math.Abs(step - mean) > Math.Max(StepTolerance * mean, quantum * 1.000001))
                {
                    return string.Create(CultureInfo.InvariantCulture, $"line {_lines[i]} steps by {step:G10} where the first rows step by {mean:G10} on average");
                }
            }

            return null;
        }
    }
}
