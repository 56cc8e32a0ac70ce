using System.CommandLine;
using HumWatch.Host.Web;

namespace HumWatch.Cli.Commands;

/// <summary>`humwatch web-password`: reads a password on standard input and prints its hash for Web:PasswordHash.</summary>
internal static class WebPasswordCommand
{
    public static Command Create()
    {
        var command = new Command("web-password", "Reads a password (one line on standard input) and prints the hash to set as Web:PasswordHash, with Web:User, for signing in to the live page. The password itself is stored nowhere.");
        command.SetAction(_ => Run(Console.In, Console.Out, Console.Error));
        return command;
    }

    internal static int Run(TextReader stdin, TextWriter stdout, TextWriter stderr)
    {
        var password = stdin.ReadLine();
        if (string.IsNullOrEmpty(password))
        {
            stderr.WriteLine("humwatch web-password: no password on standard input (e.g. read -rs pw && printf '%s\\n' \"$pw\" | humwatch web-password).");
            return ExitCodes.BadInput;
        }

        if (password.Length < 8)
        {
            stderr.WriteLine($"humwatch web-password: the password has {password.Length} characters; use at least 8.");
            return ExitCodes.BadInput;
        }

        stdout.WriteLine(PasswordCheck.Hash(password));
        return ExitCodes.Ok;
    }
}
