using System.CommandLine;
using HumWatch.Host.Security;

namespace HumWatch.Cli.Commands;

/// <summary>`humwatch keys new FILE [--force]`: makes a CurveZMQ key pair file for an encrypted ingest endpoint.</summary>
internal static class KeysCommand
{
    public static Command Create()
    {
        var file = new Argument<string>("file") { Description = "Key pair file to write, e.g. /etc/humwatch/ingest-server.key (set it as Ingest:Endpoints:N:Curve:ServerKeyFile or Publish:Curve:ServerKeyFile)." };
        var force = new Option<bool>("--force") { Description = "Replace a file that already exists." };
        var create = new Command("new", "Writes a new CurveZMQ key pair as JSON {\"publicKey\", \"secretKey\"} (owner read/write only on Unix) and prints its public key for the senders.")
        {
            file,
            force,
        };
        create.SetAction(parse => New(parse.GetValue(file)!, parse.GetValue(force), Console.Out, Console.Error));
        return new Command("keys", "Makes CurveZMQ key files for encrypted ingest and publishing (see docs/protocol.md).") { create };
    }

    /// <summary>Writes the key pair; returns the exit code.</summary>
    internal static int New(string path, bool force, TextWriter stdout, TextWriter stderr)
    {
        if (Directory.Exists(path))
        {
            stderr.WriteLine($"humwatch keys new: '{path}' is a folder; give the key file's name.");
            return ExitCodes.BadInput;
        }

        if (File.Exists(path) && !force)
        {
            stderr.WriteLine($"humwatch keys new: '{path}' already exists; a sender holding its public key would be locked out by a new one. Use --force to replace it.");
            return ExitCodes.BadInput;
        }

        try
        {
            var certificate = CurveKeyFile.Create(path);
            stdout.WriteLine($"Wrote a CurveZMQ key pair to {path} (keep it secret: readable by its owner only).");
            stdout.WriteLine($"Public key for the senders' curve_serverkey: {certificate.PublicKeyZ85}");
            stdout.WriteLine("For a sender's own key pair, add that public key as one line of the server's Curve:AllowedClientKeysFile.");
            return ExitCodes.Ok;
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            stderr.WriteLine($"humwatch keys new: cannot write '{path}': {ex.Message}");
            return ExitCodes.BadInput;
        }
    }
}
