using System.Security.Cryptography;
using NaCl;
using NetMQ;

namespace HumWatch.Host.Security;

/// <summary>
/// An extra, third frame by which a CURVE sender proves which client key it holds. NetMQ 4.0.4.5 completes the CURVE
/// handshake without asking a ZAP handler (ZeroMQ RFC 27) and never shows the application the client's key, so the
/// allow-list cannot be enforced at the handshake. Instead each message carries
/// <c>client public key (32 bytes) ‖ nonce (24) ‖ crypto_box(label, nonce, client secret, server public) (32)</c>:
/// only a holder of the client's secret key (or of the server's) can make a box that opens with that pair
/// (NaCl crypto_box, Bernstein et al.; the same primitive CURVE uses, RFC 26). The frame travels inside the CURVE
/// channel, so nobody on the wire sees it.
/// </summary>
public static class ClientKeyProof
{
    /// <summary>Length of the proof frame, 88 bytes.</summary>
    public const int Length = ClientKeyAllowList.KeyLength + NonceLength + BoxLength;

    /// <summary>The 16-byte text that is boxed; a box of anything else does not count.</summary>
    public static ReadOnlySpan<byte> Label => "HumWatch-client1"u8;

    private const int NonceLength = 24;
    private const int TagLength = 16;
    private const int LabelLength = 16;
    private const int BoxLength = TagLength + LabelLength;

    /// <summary>Makes a proof frame for a sender holding <paramref name="client"/> (with its secret key) that sends to the server with public key <paramref name="serverPublicKey"/>.</summary>
    public static byte[] Create(NetMQCertificate client, byte[] serverPublicKey)
    {
        Span<byte> nonce = stackalloc byte[NonceLength];
        RandomNumberGenerator.Fill(nonce);
        return Create(client, serverPublicKey, nonce);
    }

    /// <summary>As <see cref="Create(NetMQCertificate, byte[])"/> with a given nonce (tests compare against libsodium's box); a nonce must never repeat for one key pair.</summary>
    internal static byte[] Create(NetMQCertificate client, byte[] serverPublicKey, ReadOnlySpan<byte> nonce)
    {
        ArgumentNullException.ThrowIfNull(client);
        ArgumentNullException.ThrowIfNull(serverPublicKey);
        if (!client.HasSecretKey)
        {
            throw new ArgumentException("The client certificate has no secret key to prove.", nameof(client));
        }

        var proof = new byte[Length];
        client.PublicKey.CopyTo(proof, 0);
        ArgumentOutOfRangeException.ThrowIfNotEqual(nonce.Length, NonceLength, nameof(nonce));
        nonce.CopyTo(proof.AsSpan(ClientKeyAllowList.KeyLength, NonceLength));
        using var box = new Curve25519XSalsa20Poly1305(client.SecretKey, serverPublicKey);
        box.Encrypt(proof.AsSpan(ClientKeyAllowList.KeyLength + NonceLength), Label, nonce);
        return proof;
    }
}

/// <summary>Outcome of checking one message's proof frame.</summary>
public enum ClientKeyCheck
{
    /// <summary>The proof opens with a listed key.</summary>
    Allowed,

    /// <summary>The message had no third frame (a sender that does not know about the allow-list).</summary>
    NoProof,

    /// <summary>The third frame has the wrong length.</summary>
    Malformed,

    /// <summary>The claimed client key is not on the list.</summary>
    NotListed,

    /// <summary>The key is listed but the box does not open: the sender does not hold that key's secret.</summary>
    BadProof,
}

/// <summary>
/// Checks proof frames against an allow-list for one server key. One instance per socket, used by its owner thread
/// only; the per-key shared secrets are computed once, so a check is one 16-byte XSalsa20-Poly1305 open.
/// </summary>
internal sealed class ClientKeyGate : IDisposable
{
    private readonly ClientKeyAllowList _allowed;
    private readonly Curve25519XSalsa20Poly1305[] _boxes;
    private readonly byte[] _opened = new byte[16];
    private long _refused;

    public ClientKeyGate(ClientKeyAllowList allowed, NetMQCertificate server)
    {
        ArgumentNullException.ThrowIfNull(allowed);
        ArgumentNullException.ThrowIfNull(server);
        _allowed = allowed;
        _boxes = new Curve25519XSalsa20Poly1305[allowed.Keys.Count];
        for (var i = 0; i < _boxes.Length; i++)
        {
            _boxes[i] = new Curve25519XSalsa20Poly1305(server.SecretKey, allowed.Keys[i]);
        }
    }

    /// <summary>How many keys are listed.</summary>
    public int KeyCount => _boxes.Length;

    /// <summary>Messages refused so far (read from any thread).</summary>
    public long RefusedCount => Interlocked.Read(ref _refused);

    /// <summary>Checks a proof frame (empty when the message had none) and counts a refusal.</summary>
    public ClientKeyCheck Check(ReadOnlySpan<byte> proof, bool present)
    {
        var outcome = Evaluate(proof, present);
        if (outcome != ClientKeyCheck.Allowed)
        {
            Interlocked.Increment(ref _refused);
        }

        return outcome;
    }

    public void Dispose()
    {
        foreach (var box in _boxes)
        {
            box.Dispose();
        }
    }

    private ClientKeyCheck Evaluate(ReadOnlySpan<byte> proof, bool present)
    {
        if (!present)
        {
            return ClientKeyCheck.NoProof;
        }

        if (proof.Length != ClientKeyProof.Length)
        {
            return ClientKeyCheck.Malformed;
        }

        var index = _allowed.IndexOf(proof[..ClientKeyAllowList.KeyLength]);
        if (index < 0)
        {
            return ClientKeyCheck.NotListed;
        }

        var nonce = proof.Slice(ClientKeyAllowList.KeyLength, 24);
        var box = proof[(ClientKeyAllowList.KeyLength + 24)..];
        return _boxes[index].TryDecrypt(_opened, box, nonce) && ClientKeyProof.Label.SequenceEqual(_opened)
            ? ClientKeyCheck.Allowed
            : ClientKeyCheck.BadProof;
    }
}
