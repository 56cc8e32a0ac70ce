using System.CommandLine;
using HumWatch.Host.Composition;
using HumWatch.Host.Configuration;

namespace HumWatch.Cli.Commands;

/// <summary>`humwatch run [--data DIR] [--config PATH]... [--set KEY=VALUE]...`: the background service.</summary>
internal static class RunCommand
{
    public static Command Create()
    {
        var data = new Option<string?>("--data") { Description = CommandSettings.DataDescription + " Default: the paths in the settings (humwatch-data/… unless configured)." };
        var config = CommandSettings.ConfigOption();
        var set = CommandSettings.SetOption();
        var command = new Command("run", "Runs the service: watches streams on the ingest socket and files in the inbox, publishes alerts, keeps the store and logs. Stops on Ctrl-C or SIGTERM.")
        {
            data,
            config,
            set,
        };
        command.SetAction(parse =>
        {
            var overrides = new Dictionary<string, string?>(StringComparer.OrdinalIgnoreCase);
            if (parse.GetValue(data) is { } folder)
            {
                CommandSettings.AddDataFolder(folder, overrides);
            }

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
