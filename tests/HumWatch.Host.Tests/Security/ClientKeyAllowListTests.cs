using HumWatch.Host.Security;
using NetMQ;
using Xunit;

namespace HumWatch.Host.Tests.Security;

public sealed class ClientKeyAllowListTests : IDisposable
{
    private readonly TempFolder _temp = new();

    public void Dispose() => _temp.Dispose();

    [Fact]
    public void Keys_are_read_one_per_line_with_comments_and_blank_lines_ignored()
    {
        // zmq_curve(7) test keys (from memory): the client's and the server's Z85 public keys.
        const string clientZ85 = "Yne@$w-vo<fVvi]a<NY6T1ed:M$fCG*[IaLV{hID";
        const string serverZ85 = "rq:rM>}U?@Lns47E1%kR.o@n%FcmmsL/@{H8]yf7";
        // '#' inside a key is Z85 (RFC 32), not a comment: the second key has one; a comment needs a space before it.
        const string keyWithHash = "x#Ca!wbnCLk8T1rL#Dq.1pCDs?-%Pb+Z0Mb-i^x@";
        var path = _temp.WriteText("senders.keys", $"# lab senders\n\n  {clientZ85}  # amplifier PC\n{keyWithHash}\n{serverZ85} #note\n#\n");

        var list = ClientKeyAllowList.Read(path);

        Assert.Equal(3, list.Keys.Count);
        Assert.Equal(NetMQCertificate.FromPublicKey(clientZ85).PublicKey, list.Keys[0]);
        Assert.Equal(NetMQCertificate.FromPublicKey(keyWithHash).PublicKey, list.Keys[1]);
        Assert.True(list.Contains(NetMQCertificate.FromPublicKey(serverZ85).PublicKey));
        Assert.False(list.Contains(new NetMQCertificate().PublicKey));
    }

    [Theory]
    [InlineData("# only comments\n", "lists no key")]
    [InlineData("# header\ntoo-short\n", "line 2: a key must be 40 Z85 characters; it has 9")]
    [InlineData("rq:rM>}U?@Lns47E1%kR.o@n%FcmmsL/@{H8]yf7 Yne@$w-vo<fVvi]a<NY6T1ed:M$fCG*[IaLV{hID\n", "line 1: one key per line")]
    public void A_bad_list_is_refused_naming_the_file_and_the_line(string content, string problem)
    {
        var path = _temp.WriteText("senders.keys", content);

        var ex = Assert.Throws<InvalidDataException>(() => ClientKeyAllowList.Read(path));

        Assert.Contains($"'{path}'", ex.Message, StringComparison.Ordinal);
        Assert.Contains(problem, ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_missing_list_is_named()
    {
        var path = _temp.File("absent.keys");

        var ex = Assert.Throws<InvalidDataException>(() => ClientKeyAllowList.Read(path));

        Assert.Contains(path, ex.Message, StringComparison.Ordinal);
        Assert.Contains("cannot be read", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_proof_made_by_libsodium_is_accepted_and_ours_is_the_same_bytes()
    {
        // Fixture from tests/fixtures/curve/make_client_proof.py: python3-nacl 1.5.0 (libsodium crypto_box), zmq_curve(7) test keys.
        using var fixture = System.Text.Json.JsonDocument.Parse(File.ReadAllText(Path.Combine(AppContext.BaseDirectory, "fixtures", "curve", "client-proof.json")));
        var root = fixture.RootElement;
        var clientPublic = root.GetProperty("clientPublicZ85").GetString()!;
        var server = NetMQCertificate.CreateFromSecretKey(root.GetProperty("serverSecretZ85").GetString()!);
        var proof = Convert.FromHexString(root.GetProperty("proofHex").GetString()!);
        using var gate = new ClientKeyGate(ClientKeyAllowList.Read(_temp.WriteText("senders.keys", clientPublic + "\n")), server);

        Assert.Equal(ClientKeyCheck.Allowed, gate.Check(proof, present: true));

        // zmq_curve(7) client secret (from memory; the script asserts it matches the public key above).
        var client = NetMQCertificate.CreateFromSecretKey("D:)Q[IlAW!ahhC2ac:9*A}h:p?([4%wOTJ%JR%cs");
        Assert.Equal(proof, ClientKeyProof.Create(client, server.PublicKey, proof.AsSpan(32, 24)));
    }

    [Fact]
    public void A_proof_opens_only_for_the_listed_key_it_was_made_with_and_the_server_it_was_made_for()
    {
        var server = new NetMQCertificate();
        var otherServer = new NetMQCertificate();
        var listed = new NetMQCertificate();
        var unlisted = new NetMQCertificate();
        var path = _temp.WriteText("senders.keys", listed.PublicKeyZ85 + "\n");
        using var gate = new ClientKeyGate(ClientKeyAllowList.Read(path), server);

        Assert.Equal(ClientKeyCheck.Allowed, gate.Check(ClientKeyProof.Create(listed, server.PublicKey), present: true));
        Assert.Equal(ClientKeyCheck.NotListed, gate.Check(ClientKeyProof.Create(unlisted, server.PublicKey), present: true));
        Assert.Equal(ClientKeyCheck.BadProof, gate.Check(ClientKeyProof.Create(listed, otherServer.PublicKey), present: true));
        var tampered = ClientKeyProof.Create(listed, server.PublicKey);
        tampered[^1] ^= 1; // Poly1305 tag check (NaCl crypto_box): one flipped bit fails it
        Assert.Equal(ClientKeyCheck.BadProof, gate.Check(tampered, present: true));
        Assert.Equal(ClientKeyCheck.Malformed, gate.Check(new byte[ClientKeyProof.Length - 1], present: true));
        Assert.Equal(ClientKeyCheck.NoProof, gate.Check(default, present: false));
        Assert.Equal(5, gate.RefusedCount);
    }
}
