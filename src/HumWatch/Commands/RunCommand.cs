using System.CommandLine;
using HumWatch.Host.Composition;
using HumWatch.Host.Configuration;

namespace HumWatch.Cli.Commands;

/// <summary>`humwatch run [--config PATH]... [--set KEY=VALUE]...`: the background service.</summary>
internal static class RunCommand
{
    public static Command Create()
    {
        var config = CommandSettings.ConfigOption();
        var set = CommandSettings.SetOption();
        var command = new Command("run", "Runs the service: watches streams on the ingest socket and files in the inbox, publishes alerts, keeps the store and logs. Stops on Ctrl-C or SIGTERM.")
        {
            config,
            set,
        };
        command.SetAction(parse =>
        {
            var overrides = new Dictionary<string, string?>(StringComparer.OrdinalIgnoreCase);
            if (!CommandSettings.TryParseSettings("run", parse.GetValue(set) ?? [], overrides, Console.Error))
            {
                return ExitCodes.BadInput;
            }

            var sources = new SettingsSources { ConfigFiles = parse.GetValue(config) ?? [], Overrides = overrides };
            return ServiceRunner.Run("run", new HumWatchHostSettings { Sources = sources });
        });
        return command;
    }
}
