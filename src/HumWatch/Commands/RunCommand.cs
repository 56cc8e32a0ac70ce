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
        var settings = new SettingsArguments();
        var command = settings.AddTo(new Command("run", "Runs the service: watches streams on the ingest socket and files in the inbox, publishes alerts, keeps the store and logs. Stops on Ctrl-C or SIGTERM.")
        {
            data,
        });
        command.SetAction(parse =>
        {
            var sources = CommandSettings.TrySources("run", settings.ConfigFiles(parse), settings.Settings(parse), Console.Error, parse.GetValue(data));
            return sources is null ? ExitCodes.BadInput : ServiceRunner.Run("run", new HumWatchHostSettings { Sources = sources });
        });
        return command;
    }
}
