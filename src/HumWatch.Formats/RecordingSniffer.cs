using System.Globalization;
using System.Text;

namespace HumWatch.Formats;

/// <summary>
/// Tells, from a file's first bytes and its name, whether a folder walk should take it as a recording. It decides
/// which files are checked, not whether they are valid: a ".edf" file with a broken header is taken, so that the
/// report says what is wrong with it.
/// </summary>
public static class RecordingSniffer
{
    private const int TextProbeBytes = 16 * 1024;
    private const int DataLinesNeeded = 2;

    // BIDS specification, "Modality agnostic files" and "Tabular files": these tables sit beside recordings and are
    // never recordings themselves, even when every column is numeric.
    private static readonly string[] _sidecarEndings = ["_events.tsv", "_channels.tsv", "_electrodes.tsv", "_scans.tsv", "_sessions.tsv", "_beh.tsv"];

    /// <summary>
    /// True for an EDF/EDF+ or BDF/BDF+ file by content (whatever its name), a file named .edf or .bdf (so a broken one
    /// is reported), a .csv file, and a .tsv or .txt file whose first lines are numeric columns (a time column and at
    /// least one channel) unless its name marks it as a BIDS side table.
    /// </summary>
    /// <exception cref="IOException">The file cannot be read.</exception>
    /// <exception cref="UnauthorizedAccessException">The file cannot be opened.</exception>
    public static bool LooksLikeRecording(string path)
    {
        ArgumentException.ThrowIfNullOrEmpty(path);
        var extension = Path.GetExtension(path);
        if (Is(extension, ".edf") || Is(extension, ".bdf") || Is(extension, ".csv"))
        {
            return true;
        }

        using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete, 1);
        Span<byte> head = stackalloc byte[8];
        var read = stream.ReadAtLeast(head, head.Length, throwOnEndOfStream: false);
        if (read == 8 && RecordingReader.IsEdfOrBdfVersion(head))
        {
            return true;
        }

        if (!(Is(extension, ".tsv") || Is(extension, ".txt")) || IsSidecarName(Path.GetFileName(path)))
        {
            return false;
        }

        stream.Position = 0;
        var buffer = new byte[TextProbeBytes];
        var length = stream.ReadAtLeast(buffer, buffer.Length, throwOnEndOfStream: false);
        return StartsWithNumericColumns(buffer.AsSpan(0, length));
    }

    internal static bool IsSidecarName(string fileName) =>
        fileName.Equals("participants.tsv", StringComparison.OrdinalIgnoreCase)
        || _sidecarEndings.Any(e => fileName.EndsWith(e, StringComparison.OrdinalIgnoreCase));

    /// <summary>An optional header line, then at least two lines of the same number (≥ 2) of numeric fields.</summary>
    internal static bool StartsWithNumericColumns(ReadOnlySpan<byte> head)
    {
        string text;
        try
        {
            text = new UTF8Encoding(false, throwOnInvalidBytes: true).GetString(head);
        }
        catch (DecoderFallbackException)
        {
            // A probe can end inside a multi-byte character; anything else undecodable is binary.
            if (head.Length < TextProbeBytes)
            {
                return false;
            }

            text = Encoding.UTF8.GetString(head);
        }

        var lines = text.Split('\n');
        var complete = head.Length < TextProbeBytes ? lines.Length : lines.Length - 1; // the probe's last line may be cut
        var headerSeen = false;
        var dataLines = 0;
        var fields = 0;
        for (var i = 0; i < complete && dataLines < DataLinesNeeded; i++)
        {
            var line = lines[i].TrimEnd('\r');
            if (line.Trim().Length == 0)
            {
                continue;
            }

            var count = NumericFieldCount(line);
            if (count < 2)
            {
                // One header line before the data; a second text line, or text among the data, is not a recording.
                if (headerSeen || dataLines > 0)
                {
                    return false;
                }

                headerSeen = true;
                continue;
            }

            if (dataLines > 0 && count != fields)
            {
                return false;
            }

            fields = count;
            dataLines++;
        }

        return dataLines >= DataLinesNeeded;
    }

    /// <summary>The number of fields when every field of the line is a number (tab, ',' or ';' separated), else 0.</summary>
    private static int NumericFieldCount(string line)
    {
        foreach (var separator in (ReadOnlySpan<char>)['\t', ',', ';'])
        {
            var parts = line.Split(separator);
            if (parts.Length < 2)
            {
                continue;
            }

            // ';' files may write decimal commas (the CSV reader takes them, README "Checking a recording").
            var decimalComma = separator == ';';
            if (parts.All(p => IsNumber(decimalComma ? p.Replace(',', '.') : p)))
            {
                return parts.Length;
            }
        }

        return 0;
    }

    private static bool IsNumber(string field) =>
        double.TryParse(field.Trim(), NumberStyles.Float, CultureInfo.InvariantCulture, out _);

    private static bool Is(string extension, string wanted) => extension.Equals(wanted, StringComparison.OrdinalIgnoreCase);
}
