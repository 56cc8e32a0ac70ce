using System.Text;
using HumWatch.Host.Security;
using NetMQ;
using Xunit;

namespace HumWatch.Host.Tests.Security;

public sealed class CurveKeyFileTests : IDisposable
{
    private readonly TempFolder _temp = new();

    public void Dispose() => _temp.Dispose();

    [Fact]
    public void Key_file_round_trips_and_keeps_the_secret_owner_only()
    {
        using var temp = new TempFolder();
        var pairFile = Path.Combine(temp.Path, "pair.key");
        var publicFile = Path.Combine(temp.Path, "public.key");

        var created = CurveKeyFile.Create(pairFile);
        CurveKeyFile.Write(publicFile, created, includeSecretKey: false);
        var read = CurveKeyFile.ReadKeyPair(pairFile);

        Assert.Equal(created.PublicKeyZ85, read.PublicKeyZ85);
        Assert.Equal(created.SecretKeyZ85, read.SecretKeyZ85);
        Assert.Equal(created.PublicKeyZ85, CurveKeyFile.ReadPublicKey(publicFile));
        Assert.Equal(40, created.PublicKeyZ85.Length); // ZeroMQ RFC 32/Z85: 32 bytes encode as 40 characters
        Assert.False(CurveKeyFile.IsReadableByOthers(pairFile));
        var ex = Assert.Throws<InvalidDataException>(() => CurveKeyFile.ReadKeyPair(publicFile));
        Assert.Contains(publicFile, ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_file_holding_only_the_secret_key_yields_the_public_key_curve25519_derives_from_it()
    {
        // zmq_curve(7) test key pair (from memory): the server's Z85 secret and public key.
        const string secretZ85 = "JTKVSB%%)wK0E.X)V>+}o?pNmC{O&4W4b!Ni{Lh6";
        const string publicZ85 = "rq:rM>}U?@Lns47E1%kR.o@n%FcmmsL/@{H8]yf7";
        var path = OwnerOnly(_temp.WriteText("secret-only.key", $$"""{ "secretKey": {{Quoted(secretZ85)}} }"""));

        Assert.Equal(publicZ85, CurveKeyFile.ReadPublicKey(path));
        Assert.Equal(publicZ85, CurveKeyFile.ReadKeyPair(path).PublicKeyZ85);
    }

    [Fact]
    public void Written_key_files_are_UTF8_JSON_without_a_byte_order_mark()
    {
        var path = _temp.File("pair.key");

        CurveKeyFile.Create(path);

        var bytes = File.ReadAllBytes(path);
        Assert.Equal((byte)'{', bytes[0]); // RFC 8259 section 8.1: no byte-order mark before JSON text
        Assert.Contains("\"secretKey\"", Encoding.UTF8.GetString(bytes), StringComparison.Ordinal);
    }

    public static TheoryData<string, string> BadFiles() => new()
    {
        { "[1, 2]", "is not a JSON object" },
        { "{ \"secretKey\": ", "is not valid JSON" },
        { "{ \"secretKey\": \"too-short\" }", "\"secretKey\" must be a 40-character Z85 string" },
        { "{ \"publicKey\": 40 }", "\"publicKey\" must be a 40-character Z85 string" },
        { "{ }", "has no \"secretKey\"" },
    };

    [Theory]
    [MemberData(nameof(BadFiles))]
    public void A_bad_key_file_is_refused_with_a_message_naming_the_file_and_the_problem(string content, string problem)
    {
        var path = _temp.WriteText("bad.key", content);

        var ex = Assert.Throws<InvalidDataException>(() => CurveKeyFile.ReadKeyPair(path));

        Assert.Contains(path, ex.Message, StringComparison.Ordinal);
        Assert.Contains(problem, ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_public_key_that_does_not_belong_to_the_secret_key_is_refused_naming_the_file()
    {
        var mine = new NetMQCertificate();
        var other = new NetMQCertificate();
        var path = OwnerOnly(_temp.WriteText("mixed.key", $$"""{ "publicKey": {{Quoted(other.PublicKeyZ85)}}, "secretKey": {{Quoted(mine.SecretKeyZ85!)}} }"""));

        var ex = Assert.Throws<InvalidDataException>(() => CurveKeyFile.ReadKeyPair(path));

        Assert.Contains(path, ex.Message, StringComparison.Ordinal);
        Assert.Contains("does not belong", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_missing_key_file_is_named()
    {
        var path = _temp.File("absent.key");

        var ex = Assert.Throws<InvalidDataException>(() => CurveKeyFile.ReadPublicKey(path));

        Assert.Contains(path, ex.Message, StringComparison.Ordinal);
        Assert.Contains("cannot be read", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_secret_key_file_readable_by_group_or_others_is_refused_naming_the_file_its_mode_and_chmod_600()
    {
        if (OperatingSystem.IsWindows())
        {
            return; // Windows files have no Unix mode bits; the check is skipped there by design.
        }

        var path = _temp.File("open.key");
        CurveKeyFile.Create(path);
        File.SetUnixFileMode(path, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.GroupRead | UnixFileMode.OtherRead);

        var ex = Assert.Throws<InvalidDataException>(() => CurveKeyFile.ReadKeyPair(path));

        Assert.Contains($"'{path}'", ex.Message, StringComparison.Ordinal);
        Assert.Contains("mode 0644", ex.Message, StringComparison.Ordinal);
        Assert.Contains($"chmod 600 {path}", ex.Message, StringComparison.Ordinal);

        File.SetUnixFileMode(path, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.GroupRead);
        Assert.Contains("mode 0640", Assert.Throws<InvalidDataException>(() => CurveKeyFile.ReadKeyPair(path)).Message, StringComparison.Ordinal);

        // A public key is meant to be handed out: the sender-side reader does not mind the mode.
        Assert.Equal(40, CurveKeyFile.ReadPublicKey(path).Length);
        File.SetUnixFileMode(path, UnixFileMode.UserRead | UnixFileMode.UserWrite);
        Assert.NotNull(CurveKeyFile.ReadKeyPair(path));
    }

    private static string OwnerOnly(string path)
    {
        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(path, UnixFileMode.UserRead | UnixFileMode.UserWrite);
        }

        return path;
    }

    // Z85's alphabet has no quote or backslash (ZeroMQ RFC 32), but quoting through the serializer keeps the JSON valid regardless.
    private static string Quoted(string z85) => System.Text.Json.JsonSerializer.Serialize(z85);
}
