using System.Diagnostics;
using System.Net;
using System.Runtime.CompilerServices;
using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using System.Text.Json;
using Xunit;

namespace HumWatch.Host.Tests.Notify.Support;

/// <summary>
/// Debian's aiosmtpd (python3-aiosmtpd) run by tests/fixtures/smtp/smtp_peer.py with /usr/bin/python3, on 127.0.0.1
/// at a port the system picks; every mail it takes is a JSON file in <see cref="Folder"/>.
/// </summary>
internal sealed class SmtpPeer : IAsyncDisposable
{
    public const string Python = Ingest.Support.PythonPeer.Python;

    private static readonly Lazy<string?> MissingReason = new(FindMissing);
    private readonly Process _process;

    private SmtpPeer(Process process, int port, string folder)
    {
        _process = process;
        Port = port;
        Folder = folder;
    }

    /// <summary>Why the peer cannot run here, or null when /usr/bin/python3 imports aiosmtpd.</summary>
    public static string? WhyUnavailable => MissingReason.Value;

    public int Port { get; }

    public string Folder { get; }

    /// <summary>Starts the peer; with <paramref name="tls"/> it offers STARTTLS and takes no mail before it; with <paramref name="login"/> it requires that login.</summary>
    public static async Task<SmtpPeer> StartAsync(string folder, TestCertificate? tls = null, (string User, string Password)? login = null)
    {
        Directory.CreateDirectory(folder);
        var info = new ProcessStartInfo(Python)
        {
            RedirectStandardInput = true,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        info.ArgumentList.Add(Path.Combine(AppContext.BaseDirectory, "fixtures", "smtp", "smtp_peer.py"));
        info.ArgumentList.Add("--folder");
        info.ArgumentList.Add(folder);
        if (tls is not null)
        {
            info.ArgumentList.Add("--tls-cert");
            info.ArgumentList.Add(tls.CertificateFile);
            info.ArgumentList.Add("--tls-key");
            info.ArgumentList.Add(tls.KeyFile);
        }

        if (login is { } l)
        {
            // The password goes to the peer's own environment, never onto its command line.
            info.ArgumentList.Add("--user");
            info.ArgumentList.Add(l.User);
            info.ArgumentList.Add("--password-variable");
            info.ArgumentList.Add("PEER_PASSWORD");
            info.Environment["PEER_PASSWORD"] = l.Password;
        }

        var process = Process.Start(info) ?? throw new InvalidOperationException($"could not start {Python}");
        var error = process.StandardError.ReadToEndAsync();
        using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(30));
        string? line;
        try
        {
            line = await process.StandardOutput.ReadLineAsync(timeout.Token);
        }
        catch (OperationCanceledException)
        {
            process.Kill(entireProcessTree: true);
            throw new TimeoutException("the SMTP peer did not say its port within 30 s");
        }

        if (line is null || !line.StartsWith("listening ", StringComparison.Ordinal))
        {
            await process.WaitForExitAsync();
            throw new InvalidOperationException($"the SMTP peer did not start: {line} {await error}");
        }

        return new SmtpPeer(process, int.Parse(line["listening ".Length..], System.Globalization.CultureInfo.InvariantCulture), folder);
    }

    /// <summary>The mails received so far, oldest first.</summary>
    public List<JsonElement> Mails() =>
        [.. Directory.GetFiles(Folder, "*.json").Order(StringComparer.Ordinal).Select(f => JsonDocument.Parse(File.ReadAllText(f)).RootElement.Clone())];

    public async ValueTask DisposeAsync()
    {
        // Closing stdin is the peer's signal to stop.
        _process.StandardInput.Close();
        using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(10));
        try
        {
            await _process.WaitForExitAsync(timeout.Token);
        }
        catch (OperationCanceledException)
        {
            _process.Kill(entireProcessTree: true);
        }

        _process.Dispose();
    }

    private static string? FindMissing() => Ingest.Support.PythonPeer.WhyCannotImport("aiosmtpd", "python3-aiosmtpd");
}

/// <summary>A throwaway self-signed certificate for 127.0.0.1, written as PEM files; it is also its own authority (for CA-file trust).</summary>
internal sealed class TestCertificate
{
    private TestCertificate(string certificateFile, string keyFile, string sha256)
    {
        CertificateFile = certificateFile;
        KeyFile = keyFile;
        Sha256 = sha256;
    }

    public string CertificateFile { get; }

    public string KeyFile { get; }

    /// <summary>SHA-256 of the DER certificate, hex with colons, as a person would paste it.</summary>
    public string Sha256 { get; }

    public static TestCertificate Create(string folder)
    {
        using var key = ECDsa.Create(ECCurve.NamedCurves.nistP256);
        var request = new CertificateRequest("CN=HumWatch test SMTP peer", key, HashAlgorithmName.SHA256);
        var names = new SubjectAlternativeNameBuilder();
        names.AddIpAddress(IPAddress.Loopback);
        request.CertificateExtensions.Add(names.Build());
        request.CertificateExtensions.Add(new X509BasicConstraintsExtension(certificateAuthority: true, hasPathLengthConstraint: true, pathLengthConstraint: 0, critical: true));
        request.CertificateExtensions.Add(new X509KeyUsageExtension(X509KeyUsageFlags.DigitalSignature | X509KeyUsageFlags.KeyCertSign, critical: true));
        request.CertificateExtensions.Add(new X509EnhancedKeyUsageExtension([new Oid("1.3.6.1.5.5.7.3.1")], critical: false)); // id-kp-serverAuth, RFC 5280

        // TLS checks validity against the real clock, so the certificate's window is set from it.
        var now = DateTimeOffset.UtcNow;
        using var certificate = request.CreateSelfSigned(now.AddDays(-1), now.AddDays(7));
        var certificateFile = Path.Combine(folder, "peer.crt.pem");
        var keyFile = Path.Combine(folder, "peer.key.pem");
        File.WriteAllText(certificateFile, certificate.ExportCertificatePem());
        File.WriteAllText(keyFile, key.ExportPkcs8PrivateKeyPem());
        var sha256 = string.Join(':', SHA256.HashData(certificate.RawData).Select(b => b.ToString("X2", System.Globalization.CultureInfo.InvariantCulture)));
        return new TestCertificate(certificateFile, keyFile, sha256);
    }
}

/// <summary>
/// A test against Debian's aiosmtpd, skipped when <see cref="SmtpPeer.WhyUnavailable"/> says it cannot run; the reason
/// goes into the test's name, which `dotnet test` prints at its default verbosity.
/// </summary>
[AttributeUsage(AttributeTargets.Method)]
public sealed class SmtpPeerFactAttribute : FactAttribute
{
    public SmtpPeerFactAttribute([CallerMemberName] string method = "", [CallerFilePath] string file = "")
    {
        if (SmtpPeer.WhyUnavailable is { } reason)
        {
            Skip = reason;
            DisplayName = $"{Path.GetFileNameWithoutExtension(file)}.{method} (skipped: {reason})";
        }
    }
}
