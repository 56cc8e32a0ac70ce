namespace HumWatch.Formats.Csv;

/// <summary>
/// Reads the lines of a delimited text recording like <see cref="TextReader.ReadLine"/> (a line ends at \n, \r or
/// \r\n), but refuses a line longer than <see cref="MaxLineChars"/> before holding it: a file without line breaks must
/// not become one string the size of the file.
/// </summary>
internal sealed class CsvLineReader(string path, StreamReader reader) : IDisposable
{
    /// <summary>Longest line accepted (1 Mi characters); a row of 4096 channels of 12-character numbers is 50 Ki.</summary>
    public const int MaxLineChars = 1 << 20;

    private readonly char[] _buffer = new char[1 << 14];
    private char[] _line = new char[256];
    private int _position;
    private int _end;

    /// <summary>The 1-based number of the line read last.</summary>
    public int LineNumber { get; private set; }

    public static CsvLineReader Open(string path) => new(path, CsvText.OpenText(path));

    /// <summary>The next line without its line break, or null at the end of the file.</summary>
    /// <exception cref="RecordingFormatException">The line is longer than <see cref="MaxLineChars"/>.</exception>
    public string? ReadLine()
    {
        var length = 0;
        while (true)
        {
            if (_position == _end && !Fill())
            {
                return length == 0 ? null : Finish(length);
            }

            var available = _buffer.AsSpan(_position, _end - _position);
            var stop = available.IndexOfAny('\r', '\n');
            var take = stop < 0 ? available.Length : stop;
            Append(available[..take], ref length);
            _position += take;
            if (stop < 0)
            {
                continue;
            }

            var lineBreak = _buffer[_position++];
            if (lineBreak == '\r' && (_position < _end || Fill()) && _buffer[_position] == '\n')
            {
                _position++;
            }

            return Finish(length);
        }
    }

    public void Dispose() => reader.Dispose();

    private bool Fill()
    {
        _position = 0;
        _end = reader.Read(_buffer);
        return _end > 0;
    }

    private void Append(ReadOnlySpan<char> part, ref int length)
    {
        if (length + part.Length > MaxLineChars)
        {
            throw new RecordingFormatException(path, $"line {LineNumber + 1} is longer than {MaxLineChars} characters; not a row of a text recording");
        }

        if (length + part.Length > _line.Length)
        {
            Array.Resize(ref _line, Math.Min(MaxLineChars, Math.Max(_line.Length * 2, length + part.Length)));
        }

        part.CopyTo(_line.AsSpan(length));
        length += part.Length;
    }

    private string Finish(int length)
    {
        LineNumber++;
        return new string(_line, 0, length);
    }
}
