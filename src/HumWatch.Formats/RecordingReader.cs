using HumWatch.Formats.Csv;
using HumWatch.Formats.Edf;

namespace HumWatch.Formats;

/// <summary>Opens a recording file (EDF, EDF+, BDF, BDF+ or CSV) for streaming, chunk-by-chunk reading.</summary>
public static class RecordingReader
{
    private static readonly byte[] _edfVersion = "0       "u8.ToArray();
    private static readonly byte[] _bdfVersion = [0xFF, (byte)'B', (byte)'I', (byte)'O', (byte)'S', (byte)'E', (byte)'M', (byte)'I'];

    /// <summary>
    /// Opens <paramref name="path"/>, detecting EDF ("0" + 7 spaces) and BDF (0xFF "BIOSEMI") by content and CSV by
    /// extension (.csv, .tsv, .txt). The header is read and validated here; samples are read by <see cref="IRecordingReader.ReadChunks"/>.
    /// </summary>
    /// <exception cref="RecordingFormatException">The file is missing, unreadable, not a recognised recording, or its header is invalid.</exception>
    public static IRecordingReader Open(string path, RecordingReadOptions? options = null)
    {
        ArgumentException.ThrowIfNullOrEmpty(path);
        options ??= new RecordingReadOptions();
        options.Validate();

        if (Directory.Exists(path))
        {
            throw new RecordingFormatException(path, "is a folder, not a recording file");
        }

        Span<byte> magic = stackalloc byte[8];
        int read;
        try
        {
            using var probe = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete, 1);
            read = probe.ReadAtLeast(magic, magic.Length, throwOnEndOfStream: false);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new RecordingFormatException(path, DescribeOpenFailure(ex), ex);
        }

        if (read == 0)
        {
            throw new RecordingFormatException(path, "empty file (0 bytes)");
        }

        if (read == 8 && magic.SequenceEqual(_edfVersion))
        {
            return EdfRecordingReader.Open(path, isBdf: false, options);
        }

        if (read == 8 && magic.SequenceEqual(_bdfVersion))
        {
            return EdfRecordingReader.Open(path, isBdf: true, options);
        }

        var extension = Path.GetExtension(path);
        if (extension.Equals(".csv", StringComparison.OrdinalIgnoreCase)
            || extension.Equals(".tsv", StringComparison.OrdinalIgnoreCase)
            || extension.Equals(".txt", StringComparison.OrdinalIgnoreCase))
        {
            return CsvRecordingReader.Open(path, options);
        }

        if (extension.Equals(".edf", StringComparison.OrdinalIgnoreCase) || extension.Equals(".bdf", StringComparison.OrdinalIgnoreCase))
        {
            throw new RecordingFormatException(path, $"not an EDF/BDF file: version field (bytes 0-7) is {Printable(magic[..read])}, expected \"0\" followed by 7 spaces (EDF) or 0xFF \"BIOSEMI\" (BDF)");
        }

        throw new RecordingFormatException(path, $"not a recognised recording: starts with {Printable(magic[..read])}; expected an EDF/EDF+ (\"0       \") or BDF (0xFF \"BIOSEMI\") header, or a .csv/.tsv/.txt file");
    }

    /// <summary>True when the first 8 bytes are EDF's version field ("0" + 7 spaces) or BDF's (0xFF "BIOSEMI").</summary>
    internal static bool IsEdfOrBdfVersion(ReadOnlySpan<byte> first8) =>
        first8.SequenceEqual(_edfVersion) || first8.SequenceEqual(_bdfVersion);

    internal static string DescribeOpenFailure(Exception ex) => ex switch
    {
        FileNotFoundException => "file not found",
        DirectoryNotFoundException => "folder not found",
        UnauthorizedAccessException => "access denied",
        _ => "cannot read file: " + ex.Message,
    };

    /// <summary>Shows bytes as quoted ASCII, escaping anything unprintable, so a message never carries raw binary.</summary>
    internal static string Printable(ReadOnlySpan<byte> bytes)
    {
        var sb = new System.Text.StringBuilder(bytes.Length + 2);
        sb.Append('"');
        foreach (var b in bytes)
        {
            if (b is >= 32 and < 127 && b != (byte)'"' && b != (byte)'\\')
            {
                sb.Append((char)b);
            }
            else
            {
                sb.Append("\\x").Append(b.ToString("X2", System.Globalization.CultureInfo.InvariantCulture));
            }
        }

        return sb.Append('"').ToString();
    }
}
