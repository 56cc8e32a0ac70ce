using System.Net.Security;
using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;

namespace HumWatch.Host.Notify;

/// <summary>
/// Decides whether the SMTP server's certificate is trusted after STARTTLS: what the system trusts, else a certificate
/// whose SHA-256 fingerprint is pinned, else one whose chain ends at an authority from the configured CA file (its host
/// name must still match). Nothing else: there is no "accept any certificate".
/// </summary>
internal sealed class MailCertificateTrust
{
    private readonly byte[]? _pinnedSha256;
    private readonly X509Certificate2Collection? _authorities;

    public MailCertificateTrust(byte[]? pinnedSha256, X509Certificate2Collection? authorities)
    {
        _pinnedSha256 = pinnedSha256;
        _authorities = authorities is { Count: > 0 } ? authorities : null;
    }

    /// <summary>Why the last certificate was refused, with its fingerprint (a public value), for the log; null when none was.</summary>
    public string? LastRefusal { get; private set; }

    public bool Validate(object sender, X509Certificate? certificate, X509Chain? chain, SslPolicyErrors errors)
    {
        if (errors == SslPolicyErrors.None || (errors == SslPolicyErrors.RemoteCertificateChainErrors && OnlyRevocationUnknown(chain)))
        {
            return true;
        }

        if (certificate is null)
        {
            LastRefusal = "the server sent no certificate";
            return false;
        }

        var fingerprint = SHA256.HashData(certificate.GetRawCertData());
        if (_pinnedSha256 is not null && fingerprint.AsSpan().SequenceEqual(_pinnedSha256))
        {
            return true;
        }

        string? chainProblem = null;
        if (_authorities is not null && errors == SslPolicyErrors.RemoteCertificateChainErrors)
        {
            chainProblem = ChainProblem(certificate);
            if (chainProblem is null)
            {
                return true;
            }
        }

        var detail = chainProblem is null ? errors.ToString() : $"{errors}: {chainProblem}";
        LastRefusal = $"certificate not trusted ({detail}); its SHA-256 is {Convert.ToHexString(fingerprint)}";
        return false;
    }

    /// <summary>The 32 bytes of a fingerprint written as 64 hex digits, pairs optionally separated by ':', '-' or spaces; null when it is not one.</summary>
    public static byte[]? ParseSha256(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        var digits = new string([.. text.Where(c => c is not (':' or '-' or ' '))]);
        if (digits.Length != 64 || !digits.All(char.IsAsciiHexDigit))
        {
            return null;
        }

        return Convert.FromHexString(digits);
    }

    /// <summary>Reads the authorities of a PEM file.</summary>
    /// <exception cref="StartFailureException">The file is missing, unreadable or holds no certificate; the message names the setting.</exception>
    public static X509Certificate2Collection ReadAuthorities(string path, string settingKey)
    {
        var authorities = new X509Certificate2Collection();
        try
        {
            authorities.ImportFromPemFile(path);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or CryptographicException)
        {
            throw new StartFailureException($"{settingKey} '{path}' cannot be read as PEM certificates: {ex.Message}", ex);
        }

        return authorities.Count > 0 ? authorities : throw new StartFailureException($"{settingKey} '{path}' holds no certificate (expected -----BEGIN CERTIFICATE----- blocks).");
    }

    /// <summary>
    /// True when the chain is sound but for a revocation status that could not be fetched (no route to the authority's
    /// server, common on clinical networks): that soft-fails, as mail and web clients commonly do; a revoked certificate does not.
    /// </summary>
    private static bool OnlyRevocationUnknown(X509Chain? chain)
    {
        const X509ChainStatusFlags Unknown = X509ChainStatusFlags.RevocationStatusUnknown | X509ChainStatusFlags.OfflineRevocation;
        return chain is { ChainStatus.Length: > 0 } && chain.ChainStatus.All(s => (s.Status & ~Unknown) == 0);
    }

    /// <summary>Null when the certificate chains to one of the configured authorities, else what the chain said.</summary>
    private string? ChainProblem(X509Certificate certificate)
    {
        using var leaf = X509CertificateLoader.LoadCertificate(certificate.GetRawCertData());
        using var chain = new X509Chain();
        chain.ChainPolicy.TrustMode = X509ChainTrustMode.CustomRootTrust;
        chain.ChainPolicy.CustomTrustStore.AddRange(_authorities!);

        // A site's own authority seldom publishes revocation lists the service could reach.
        chain.ChainPolicy.RevocationMode = X509RevocationMode.NoCheck;
        return chain.Build(leaf) ? null : string.Join("; ", chain.ChainStatus.Select(s => s.StatusInformation.Trim()));
    }
}
