using System.Globalization;

namespace HumWatch.Cli.Dataset;

/// <summary>
/// The files an earlier audit table already has a row for, for `--skip-checked`: a row with the same path (as the
/// table gives it), size, last write time and content hash. The path takes part so that every file of a tree gets
/// its own row, even a copy of one already checked. A row cut short by an interrupted run is not counted.
/// </summary>
internal sealed class CheckedFiles
{
    private readonly Dictionary<(string TablePath, long SizeBytes, DateTime ModifiedUtc), (string Hash, int ExitCode)> _rows = [];

    private CheckedFiles(IReadOnlyList<string> columns) => Columns = columns;

    /// <summary>The table's header, in its own order (an appended row follows it).</summary>
    public IReadOnlyList<string> Columns { get; }

    /// <summary>Reads <paramref name="path"/>.</summary>
    /// <exception cref="FormatException">The file is not an audit table; the message names the file and what is missing.</exception>
    /// <exception cref="IOException">The file cannot be read.</exception>
    public static CheckedFiles Read(string path)
    {
        using var reader = new StreamReader(path);
        var header = reader.ReadLine();
        if (header is null)
        {
            throw new FormatException($"{path}: empty, no header line; --skip-checked takes a table written by check --table");
        }

        var columns = header.Split('\t');
        int Index(string name)
        {
            var i = Array.IndexOf(columns, name);
            return i >= 0 ? i : throw new FormatException($"{path}: no '{name}' column; --skip-checked takes a table written by check --table (it needs {string.Join(", ", CheckTable.FingerprintColumns)} and exit_code)");
        }

        var (tablePath, size, modified, hash, exit) = (Index("path"), Index("size_bytes"), Index("modified_utc"), Index("xxh3"), Index("exit_code"));
        var table = new CheckedFiles(columns);
        while (reader.ReadLine() is { } line)
        {
            var cells = line.Split('\t');
            if (cells.Length != columns.Length
                || !long.TryParse(cells[size], NumberStyles.None, CultureInfo.InvariantCulture, out var sizeBytes)
                || !FileFingerprint.TryParseTime(cells[modified], out var modifiedUtc)
                || !int.TryParse(cells[exit], NumberStyles.None, CultureInfo.InvariantCulture, out var exitCode)
                || cells[hash] == CheckTable.Missing)
            {
                continue; // a row cut short, or one without a fingerprint: that file is checked again
            }

            // A later row for the same file (checked again after a change) wins.
            table._rows[(cells[tablePath], sizeBytes, modifiedUtc)] = (cells[hash], exitCode);
        }

        return table;
    }

    /// <summary>True, with the exit code its row recorded, when the file's path, size, time and then content hash match a row.</summary>
    /// <exception cref="IOException">The file cannot be read.</exception>
    public bool TryFind(DatasetFile file, out int exitCode)
    {
        exitCode = 0;
        var (size, modified) = FileFingerprint.Stat(file.FullPath);
        if (!_rows.TryGetValue((file.TablePath, size, modified), out var row))
        {
            return false; // a changed size or time needs no hash to tell
        }

        if (FileFingerprint.WithHash(file.FullPath).ContentHash != row.Hash)
        {
            return false;
        }

        exitCode = row.ExitCode;
        return true;
    }
}
