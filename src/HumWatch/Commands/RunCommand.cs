using System.CommandLine;
using HumWatch.Host.Composition;

namespace HumWatch.Cli.Commands;

/// <summary>`humwatch run [--config PATH]... [--set KEY=VALUE]...`: the background service.</summary>
internal static class RunCommand
{
    public static Command Create()
    {
        var config = new Option<string[]>("--config") { Description = "Configuration file(s) layered over the defaults and ./appsettings.json (repeatable)." };
        var set = new Option<string[]>("--set") { Description = "Overrides one setting, e.g. --set Ingest:QueueCapacity=2048 (repeatable)." };
        var command = new Command("run", "Runs the service: watches streams on the ingest socket and files in the inbox, publishes alerts, keeps the store and logs. Stops on Ctrl-C or SIGTERM.")
        {
            config,
            set,
        };
        command.SetAction(parse =>
        {
            var overrides = new Dictionary<string, string?>();
            if (!ServiceRunner.TryParseSettings("run", parse.GetValue(set) ?? [], overrides))
            {
                return ExitCodes.BadInput;
            }

            return ServiceRunner.Run("run", new HumWatchHostSettings { ConfigFiles = parse.GetValue(config) ?? [], Overrides = overrides });
        });
        return command;
    }
}
