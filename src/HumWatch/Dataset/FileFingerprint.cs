using System.Globalization;
using System.IO.Hashing;

namespace HumWatch.Cli.Dataset;

/// <summary>What `--skip-checked` compares: a file's size, its last write time (UTC) and a hash of its content.</summary>
internal readonly record struct FileFingerprint(long SizeBytes, DateTime ModifiedUtc, string ContentHash)
{
    private const int BufferBytes = 1 << 20;

    /// <summary>The last write time as the table writes it: ISO 8601 UTC to the millisecond.</summary>
    public string ModifiedText => FormatTime(ModifiedUtc);

    /// <summary>Size and time only; the hash is read when they match a row (<see cref="WithHash"/>).</summary>
    public static (long SizeBytes, DateTime ModifiedUtc) Stat(string path)
    {
        var info = new FileInfo(path);
        return (info.Length, TruncateToMilliseconds(info.LastWriteTimeUtc));
    }

    /// <summary>Size, time and the XXH3 64-bit hash of the content (a non-cryptographic hash: it spots a changed file, not a forged one).</summary>
    /// <exception cref="IOException">The file cannot be read.</exception>
    public static FileFingerprint WithHash(string path)
    {
        var (size, modified) = Stat(path);
        var hash = new XxHash3();
        var buffer = System.Buffers.ArrayPool<byte>.Shared.Rent(BufferBytes);
        try
        {
            using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete, 1, FileOptions.SequentialScan);
            int read;
            while ((read = stream.Read(buffer, 0, BufferBytes)) > 0)
            {
                hash.Append(buffer.AsSpan(0, read));
            }
        }
        finally
        {
            System.Buffers.ArrayPool<byte>.Shared.Return(buffer);
        }

        return new FileFingerprint(size, modified, hash.GetCurrentHashAsUInt64().ToString("x16", CultureInfo.InvariantCulture));
    }

    public static string FormatTime(DateTime utc) => utc.ToString("yyyy-MM-dd'T'HH:mm:ss.fff'Z'", CultureInfo.InvariantCulture);

    public static bool TryParseTime(string text, out DateTime utc) =>
        DateTime.TryParseExact(text, "yyyy-MM-dd'T'HH:mm:ss.fff'Z'", CultureInfo.InvariantCulture, DateTimeStyles.AdjustToUniversal | DateTimeStyles.AssumeUniversal, out utc);

    // The table keeps milliseconds; comparing the full tick count would never match a time read back from it.
    private static DateTime TruncateToMilliseconds(DateTime utc) =>
        new(utc.Ticks - (utc.Ticks % TimeSpan.TicksPerMillisecond), DateTimeKind.Utc);
}
