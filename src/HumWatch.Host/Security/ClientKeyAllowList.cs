using NetMQ;

namespace HumWatch.Host.Security;

/// <summary>
/// The CURVE public keys of the senders an ingest socket accepts, read from a text file: one Z85 key (40 characters)
/// per line; blank lines, lines starting with '#', and '#' comments after a key and a space are ignored.
/// </summary>
public sealed class ClientKeyAllowList
{
    /// <summary>Length of a raw CURVE public key, 32 bytes.</summary>
    public const int KeyLength = 32;

    private readonly byte[][] _keys;

    private ClientKeyAllowList(byte[][] keys) => _keys = keys;

    /// <summary>The listed keys, raw, in file order.</summary>
    public IReadOnlyList<byte[]> Keys => _keys;

    /// <summary>Reads the list.</summary>
    /// <exception cref="InvalidDataException">The file cannot be read, a line is not a Z85 key, or no key is listed; the message names the file and line.</exception>
    public static ClientKeyAllowList Read(string path)
    {
        var lines = CurveKeyFile.ReadAll(path, "Allowed client keys file", File.ReadAllLines);

        var keys = new List<byte[]>();
        for (var i = 0; i < lines.Length; i++)
        {
            // '#' is itself a Z85 character (ZeroMQ RFC 32), but never the first of a key: it is digit 84, and 84 × 85⁴
            // exceeds 2³². So a line starting with '#' is a comment, and a comment after a key needs a space before it.
            var words = lines[i].Split([' ', '\t'], 2, StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries);
            if (words.Length == 0 || words[0].StartsWith('#'))
            {
                continue;
            }

            if (words.Length > 1 && !words[1].StartsWith('#'))
            {
                throw new InvalidDataException($"Allowed client keys file '{path}' line {i + 1}: one key per line; text after the key must be a comment starting with '#'.");
            }

            keys.Add(Decode(path, i + 1, words[0]));
        }

        return keys.Count > 0
            ? new ClientKeyAllowList([.. keys])
            : throw new InvalidDataException($"Allowed client keys file '{path}' lists no key; every sender would be refused. Add one Z85 public key per line.");
    }

    /// <summary>True when <paramref name="publicKey"/> (32 raw bytes) is listed. A linear scan: lists are a handful of senders, and it allocates nothing.</summary>
    public bool Contains(ReadOnlySpan<byte> publicKey) => IndexOf(publicKey) >= 0;

    internal int IndexOf(ReadOnlySpan<byte> publicKey)
    {
        for (var i = 0; i < _keys.Length; i++)
        {
            if (publicKey.SequenceEqual(_keys[i]))
            {
                return i;
            }
        }

        return -1;
    }

    private static byte[] Decode(string path, int lineNumber, string text)
    {
        if (text.Length != CurveKeyFile.Z85KeyLength)
        {
            throw new InvalidDataException($"Allowed client keys file '{path}' line {lineNumber}: a key must be {CurveKeyFile.Z85KeyLength} Z85 characters; it has {text.Length}.");
        }

        try
        {
            return NetMQCertificate.FromPublicKey(text).PublicKey;
        }
        catch (Exception ex) when (ex is ArgumentException or FormatException or IndexOutOfRangeException)
        {
            throw new InvalidDataException($"Allowed client keys file '{path}' line {lineNumber}: '{text}' is not a Z85 key ({ex.Message}).", ex);
        }
    }
}
