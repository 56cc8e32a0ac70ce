using System.Text;

namespace HumWatch.Cli.Dataset;

/// <summary>
/// Where audit rows go: a file (new, or an earlier table appended to) or stdout. Each row is flushed as it is
/// written, so an interrupted run leaves a table that `--skip-checked` continues from.
/// </summary>
internal sealed class TableOutput : IDisposable
{
    // No byte-order mark: strict readers take one as part of the first column's name.
    private static readonly UTF8Encoding Utf8 = new(encoderShouldEmitUTF8Identifier: false);

    private readonly TextWriter? _writer;
    private readonly IReadOnlyList<string> _columns;
    private readonly bool _ownsWriter;

    private TableOutput(TextWriter? writer, IReadOnlyList<string> columns, bool ownsWriter, string? error)
    {
        _writer = writer;
        _columns = columns;
        _ownsWriter = ownsWriter;
        Error = error;
    }

    /// <summary>Why the table could not be opened, or null.</summary>
    public string? Error { get; }

    public static TableOutput Create(TextWriter writer, IReadOnlyList<string> columns, bool ownsWriter)
    {
        writer.WriteLine(string.Join('\t', columns));
        writer.Flush();
        return new TableOutput(writer, columns, ownsWriter, null);
    }

    /// <exception cref="IOException">The file cannot be written.</exception>
    public static TableOutput Create(string path, IReadOnlyList<string> columns) =>
        Create(new StreamWriter(path, append: false, Utf8), columns, ownsWriter: true);

    /// <summary>Appends rows under <paramref name="columns"/>, the file's own header, after its last whole line.</summary>
    /// <exception cref="IOException">The file cannot be written.</exception>
    public static TableOutput Append(string path, IReadOnlyList<string> columns)
    {
        var stream = new FileStream(path, FileMode.Open, FileAccess.ReadWrite, FileShare.Read);
        try
        {
            // A run killed while writing a row leaves it half written: cut back to the last line end.
            var end = stream.Length;
            while (end > 0)
            {
                stream.Position = end - 1;
                if (stream.ReadByte() == '\n')
                {
                    break;
                }

                end--;
            }

            stream.SetLength(end);
            stream.Position = end;
            return new TableOutput(new StreamWriter(stream, Utf8), columns, ownsWriter: true, null);
        }
        catch
        {
            stream.Dispose();
            throw;
        }
    }

    public static TableOutput Failed(string error) => new(null, [], ownsWriter: false, error);

    public void Write(IReadOnlyDictionary<string, string> row)
    {
        if (_writer is null)
        {
            return;
        }

        _writer.WriteLine(CheckTable.Line(_columns, row));
        _writer.Flush();
    }

    public void Dispose()
    {
        if (_ownsWriter)
        {
            _writer?.Dispose();
        }
    }
}
