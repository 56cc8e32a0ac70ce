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

    /// <summary>Most columns accepted: the time and 4096 channels, as many signals as an EDF header may have.</summary>
    private const int MaxColumns = 4097;

    private readonly string _path;
    private readonly char _separator;
    private readonly int _columnCount;
    private readonly double _timeFactorSeconds;
    private readonly int[] _channelColumns;
    private readonly double[] _channelFactors;
    private readonly double _intervalSeconds;
    private readonly long _rowCount;
    private readonly StreamLayout _layout;

    private CsvRecordingReader(string path, char separator, int columnCount, double timeFactorSeconds, int[] channelColumns, double[] channelFactors, double intervalSeconds, long rowCount, RecordingInfo info)
    {
        _path = path;
        _separator = separator;
        _columnCount = columnCount;
        _timeFactorSeconds = timeFactorSeconds;
        _channelColumns = channelColumns;
        _channelFactors = channelFactors;
        _intervalSeconds = intervalSeconds;
        _rowCount = rowCount;
        Info = info;
        _layout = info.Groups[0].Layout;
    }

    public RecordingInfo Info { get; }

    public IReadOnlyList<RecordingAnnotation> Annotations { get; } = [];

    public long AnnotationsNotKept => 0;

    public static CsvRecordingReader Open(string path, RecordingReadOptions options)
    {
        try
        {
            using var reader = CsvLineReader.Open(path);
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
            var separator = CsvText.DetectSeparator(path, headerLine, lineNumber);
            var names = headerLine.Split(separator);
            if (names.Length < 2)
            {
                throw new RecordingFormatException(path, $"line {lineNumber}: header has {names.Length} column; need a time column and at least one channel");
            }

            if (names.Length > MaxColumns)
            {
                throw new RecordingFormatException(path, $"line {lineNumber}: header has {names.Length} columns; more than {MaxColumns - 1} channels is not a plausible recording");
            }

            // One pass at open: the first rows give the time column and its sample interval, the row count the duration.
            var probe = new CsvTimeProbe(Math.Min(RateProbeRows, 64));
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

            var timeHeader = CsvText.Unquote(names[0]);
            var (timeName, timeUnit) = CsvText.SplitUnit(timeHeader);
            var timeFactor = CsvTimeColumn.TimeFactor(timeName, timeUnit);
            var byContent = false;
            if (timeFactor is null)
            {
                // Exports name the time column in many languages, or not at all: a first column of steadily increasing
                // numbers is the time, in seconds unless its unit says otherwise.
                var unitFactor = timeUnit is null ? 1.0 : CsvTimeColumn.TimeUnitFactor(timeUnit);
                var why = unitFactor is null ? $"its unit '{timeUnit}' is not a time unit" : probe.WhyNotSteady();
                if (why is not null || unitFactor is null)
                {
                    var seen = string.Join(", ", names.Select(n => $"'{CsvText.Unquote(n)}'"));
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
                var (label, unit) = CsvText.SplitUnit(CsvText.Unquote(names[i]));
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

            if (!(rateHz <= RecordingReader.MaxSampleRateHz))
            {
                throw new RecordingFormatException(path, string.Create(CultureInfo.InvariantCulture, $"sample rate {rateHz:G6} Hz (a step of {interval:G6} s over the first rows of the time column) is more than 1 MHz; not a plausible recording"));
            }

            if (rateHz < options.MinAnalysisRateHz)
            {
                var from = byContent ? $"taking column 1 '{timeHeader}' as time in seconds" : "from the time column";
                throw new RecordingFormatException(path, string.Create(CultureInfo.InvariantCulture, $"sample rate {rateHz:0.###} Hz ({from}) is below the analysis minimum of {options.MinAnalysisRateHz:0.###} Hz"));
            }

            var layout = new StreamLayout(rateHz, channels);
            var info = new RecordingInfo(path, "CSV", null, rows / rateHz, [new SignalGroup(0, layout, columns.ToArray())], skipped, null);
            return new CsvRecordingReader(path, separator, names.Length, timeFactor.Value, [.. columns], [.. factors], interval, rows, info);
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
        // Sized from the rows counted at open, never from the rate alone: a short file of a fast rate gets a short buffer.
        var capacity = (int)Math.Clamp(Math.Min(Math.Round(chunkSeconds * _layout.SampleRateHz), _rowCount), 1, 16 * 1024 * 1024 / channelCount);
        var columnToChannel = new int[_columnCount];
        Array.Fill(columnToChannel, -1);
        for (var c = 0; c < channelCount; c++)
        {
            columnToChannel[_channelColumns[c]] = c;
        }

        CsvLineReader reader;
        try
        {
            reader = CsvLineReader.Open(_path);
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
                line = ReadLineChecked(reader, lineNumber);
                lineNumber++;
            }
            while (line is not null && line.Trim().Length == 0);

            if (line is null)
            {
                throw new RecordingFormatException(_path, "the file changed after it was opened: its header row is gone");
            }

            var names = line.Split(_separator);
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
                        var t = CsvText.ParseNumber(_path, field, lineNumber, 1, CsvText.Unquote(names[0]), _separator) * _timeFactorSeconds;
                        var decimals = CsvText.Decimals(field);
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
                        var value = CsvText.ParseNumber(_path, field, lineNumber, column + 1, CsvText.Unquote(names[column]), _separator);
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

    private string? ReadLineChecked(CsvLineReader reader, int lineNumber)
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
        var tolerance = Math.Max(CsvTimeColumn.StepTolerance * _intervalSeconds, quantum * 1.000001);
        if (Math.Abs(stepSeconds - _intervalSeconds) > tolerance)
        {
            throw new RecordingFormatException(_path, string.Create(CultureInfo.InvariantCulture,
                $"line {lineNumber}, column 1: time step {stepSeconds:0.#########} s differs from the sample interval {_intervalSeconds:0.#########} s ({1 / _intervalSeconds:0.###} Hz) by more than 0.1 %; samples must be uniformly spaced"));
        }
    }
}
