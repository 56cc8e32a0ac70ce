using System.Globalization;

namespace HumWatch.Formats.Csv;

/// <summary>The first column of the first rows, as read at open: its values, how they are written, where.</summary>
internal sealed class CsvTimeProbe(int capacity)
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

        if (!CsvText.TryParseNumber(field, separator, out var value))
        {
            _unparsedLine = lineNumber;
            _unparsedText = CsvText.Shown(field);
            return;
        }

        _values.Add(value);
        _decimals.Add(CsvText.Decimals(field));
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
            if (Math.Abs(step - mean) > Math.Max(CsvTimeColumn.StepTolerance * mean, quantum * 1.000001))
            {
                return string.Create(CultureInfo.InvariantCulture, $"line {_lines[i]} steps by {step:G10} where the first rows step by {mean:G10} on average");
            }
        }

        return null;
    }
}
