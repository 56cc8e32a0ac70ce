using System.CommandLine;
using System.CommandLine.Parsing;
using HumWatch.Cli.Commands;

namespace HumWatch.Cli;

internal static class Program
{
    private static int Main(string[] args)
    {
        var root = new RootCommand("HumWatch — watches EEG recordings for mains hum, display refresh lines and other narrowband contamination.")
        {
            CheckCommand.Create(),
            SimulateCommand.Create(),
            RunCommand.Create(),
            DemoCommand.Create(),
            ListenCommand.Create(),
            SummaryCommand.Create(),
            KeysCommand.Create(),
            WebPasswordCommand.Create(),
            StoreCommand.Create(),
        };

        var parse = root.Parse(args);

        // Bad arguments are exit code 2, as for unreadable input; System.CommandLine's own default would be 1.
        if (parse.Errors.Count > 0)
        {
            // Name the command that was meant, and point at its own help rather than the list of commands.
            var path = CommandPath(parse.CommandResult);
            foreach (var error in parse.Errors)
            {
                Console.Error.WriteLine($"{path}: {error.Message}");
            }

            Console.Error.WriteLine($"Try '{path} --help'.");
            if (parse.CommandResult.Command.Name == "check")
            {
                CheckCommand.WriteArgumentErrorJson(parse, parse.Errors.Select(e => e.Message));
            }

            return ExitCodes.BadInput;
        }

        return parse.Invoke();
    }

    /// <summary>"humwatch" for the root, "humwatch check" for a command (the root's name is the executable's, so it is spelled out).</summary>
    private static string CommandPath(CommandResult result)
    {
        var names = new List<string>();
        for (SymbolResult? r = result; r is CommandResult command; r = r.Parent)
        {
            if (command.Parent is not null)
            {
                names.Insert(0, command.Command.Name);
            }
        }

        return string.Join(' ', ["humwatch", .. names]);
    }
}

/// <summary>Process exit codes shared by all commands.</summary>
internal static class ExitCodes
{
    public const int Ok = 0;
    public const int Contaminated = 1;
    public const int BadInput = 2;
}
