using System.CommandLine;
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
        };

        var parse = root.Parse(args);

        // Bad arguments are exit code 2, as for unreadable input; System.CommandLine's own default would be 1.
        if (parse.Errors.Count > 0)
        {
            foreach (var error in parse.Errors)
            {
                Console.Error.WriteLine($"humwatch: {error.Message}");
            }

            Console.Error.WriteLine("Try 'humwatch --help'.");
            return ExitCodes.BadInput;
        }

        return parse.Invoke();
    }
}

/// <summary>Process exit codes shared by all commands.</summary>
internal static class ExitCodes
{
    public const int Ok = 0;
    public const int Contaminated = 1;
    public const int BadInput = 2;
}
