using System.Text;
using System.Text.Json;
using NetMQ;

namespace HumWatch.Host.Security;

/// <summary>
/// CurveZMQ key pair files: UTF-8 JSON <c>{"publicKey":"&lt;40 Z85 chars&gt;","secretKey":"&lt;40 Z85 chars&gt;"}</c>.
/// A public-only file (for senders) has just "publicKey". Z85 is the encoding every ZeroMQ binding prints keys in.
/// </summary>
public static class CurveKeyFile
{
    /// <summary>Length of a Z85-encoded 32-byte key (40).</summary>
    public const int Z85KeyLength = 40;

    /// <summary>Creates a new key pair and writes it to <paramref name="path"/> (owner read/write only on Unix).</summary>
    /// <returns>The new key pair.</returns>
    public static NetMQCertificate Create(string path)
    {
        var certificate = new NetMQCertificate();
        Write(path, certificate, includeSecretKey: true);
        return certificate;
    }

    /// <summary>Writes a key file; without the secret key it is safe to hand to senders.</summary>
    public static void Write(string path, NetMQCertificate certificate, bool includeSecretKey)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(path);
        ArgumentNullException.ThrowIfNull(certificate);
        if (includeSecretKey && !certificate.HasSecretKey)
        {
            throw new ArgumentException("The certificate has no secret key to write.", nameof(certificate));
        }

        using var stream = new MemoryStream();
        using (var writer = new Utf8JsonWriter(stream, Serialization.OutputText.WriterOptions(indented: true)))
        {
            writer.WriteStartObject();
            writer.WriteString("publicKey"u8, certificate.PublicKeyZ85);
            if (includeSecretKey)
            {
                writer.WriteString("secretKey"u8, certificate.SecretKeyZ85);
            }

            writer.WriteEndObject();
        }

        var options = new FileStreamOptions { Mode = FileMode.Create, Access = FileAccess.Write };
        if (!OperatingSystem.IsWindows())
        {
            options.UnixCreateMode = includeSecretKey
                ? UnixFileMode.UserRead | UnixFileMode.UserWrite
                : UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.GroupRead | UnixFileMode.OtherRead;

            // The create mode applies to new files only: a replaced file gets it before the secret goes in.
            if (File.Exists(path))
            {
                File.SetUnixFileMode(path, options.UnixCreateMode.Value);
            }
        }

        using var file = new FileStream(path, options);
        stream.Position = 0;
        stream.CopyTo(file);
    }

    /// <summary>Reads a key pair file that must hold the secret key (for the server side).</summary>
    /// <exception cref="InvalidDataException">The file is not a key pair file; the message names the file and the problem.</exception>
    public static NetMQCertificate ReadKeyPair(string path)
    {
        var (publicKey, secretKey) = ReadKeys(path);
        if (secretKey is null)
        {
            throw new InvalidDataException($"CURVE key file '{path}' has no \"secretKey\"; the server needs its full key pair.");
        }

        EnsureOwnerOnly(path);

        NetMQCertificate certificate;
        try
        {
            certificate = NetMQCertificate.CreateFromSecretKey(secretKey);
        }
        catch (ArgumentException ex)
        {
            throw new InvalidDataException($"CURVE key file '{path}': \"secretKey\" is not a valid key ({ex.Message}).", ex);
        }

        if (publicKey is not null && !string.Equals(publicKey, certificate.PublicKeyZ85, StringComparison.Ordinal))
        {
            throw new InvalidDataException($"CURVE key file '{path}': \"publicKey\" does not belong to \"secretKey\".");
        }

        return certificate;
    }

    /// <summary>Reads the Z85 public key of a key file (with or without a secret key).</summary>
    public static string ReadPublicKey(string path)
    {
        var (publicKey, secretKey) = ReadKeys(path);
        if (publicKey is not null)
        {
            return publicKey;
        }

        return secretKey is not null
            ? NetMQCertificate.CreateFromSecretKey(secretKey).PublicKeyZ85
            : throw new InvalidDataException($"CURVE key file '{path}' has neither \"publicKey\" nor \"secretKey\".");
    }

    /// <summary>True when a Unix file is readable by its group or others (a secret key file should not be).</summary>
    public static bool IsReadableByOthers(string path) =>
        !OperatingSystem.IsWindows() &&
        (File.GetUnixFileMode(path) & (UnixFileMode.GroupRead | UnixFileMode.OtherRead)) != 0;

    /// <summary>
    /// Refuses a secret key file that its group or other users can read: anyone holding the secret can pose as this
    /// server. Windows has no Unix mode bits (its ACLs are left to the administrator), so the check is skipped there.
    /// </summary>
    /// <exception cref="InvalidDataException">The file is readable by others; the message names the file, its mode and the fix.</exception>
    public static void EnsureOwnerOnly(string path)
    {
        if (OperatingSystem.IsWindows() || !IsReadableByOthers(path))
        {
            return;
        }

        var mode = Convert.ToString((int)File.GetUnixFileMode(path), 8).PadLeft(4, '0');
        throw new InvalidDataException(
            $"CURVE key file '{path}' holds a secret key but has mode {mode}, readable by its group or other users; " +
            $"restrict it to the service account with `chmod 600 {path}` (humwatch keys new writes 0600).");
    }

    /// <summary>Reads a key-related file; a missing or unreadable one becomes an error naming it as <paramref name="what"/>.</summary>
    internal static T ReadAll<T>(string path, string what, Func<string, T> read)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(path);
        try
        {
            return read(path);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new InvalidDataException($"{what} '{path}' cannot be read: {ex.Message}", ex);
        }
    }

    private static (string? PublicKey, string? SecretKey) ReadKeys(string path)
    {
        var bytes = ReadAll(path, "CURVE key file", File.ReadAllBytes);

        string? publicKey = null;
        string? secretKey = null;
        try
        {
            using var document = JsonDocument.Parse(bytes);
            if (document.RootElement.ValueKind != JsonValueKind.Object)
            {
                throw new InvalidDataException($"CURVE key file '{path}' is not a JSON object.");
            }

            foreach (var property in document.RootElement.EnumerateObject())
            {
                if (property.NameEquals("publicKey"u8))
                {
                    publicKey = ReadZ85(path, property);
                }
                else if (property.NameEquals("secretKey"u8))
                {
                    secretKey = ReadZ85(path, property);
                }
            }
        }
        catch (JsonException ex)
        {
            throw new InvalidDataException($"CURVE key file '{path}' is not valid JSON: {ex.Message}", ex);
        }

        return (publicKey, secretKey);
    }

    private static string ReadZ85(string path, JsonProperty property)
    {
        var text = property.Value.ValueKind == JsonValueKind.String ? property.Value.GetString()! : string.Empty;
        if (text.Length != Z85KeyLength || Encoding.UTF8.GetByteCount(text) != Z85KeyLength)
        {
            throw new InvalidDataException($"CURVE key file '{path}': \"{property.Name}\" must be a {Z85KeyLength}-character Z85 string.");
        }

        return text;
    }
}
