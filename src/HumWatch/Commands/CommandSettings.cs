using System.CommandLine;
using HumWatch.Host.Configuration;

namespace HumWatch.Cli.Commands;

/// <summary>The settings options every command takes (--config, --set) and one way of reporting bad settings.</summary>
internal static class CommandSettings
{
    public static Option<string[]> ConfigOption(string description = "Configuration file(s) layered over the defaults and ./appsettings.json, later files winning (repeatable).") => new("--config")
    {
        Description = description,
        AllowMultipleArgumentsPerToken = false,
    };

    public static Option<string[]> SetOption() => new("--set")
    {
        Description = "Overrides one setting over the defaults, files and HUMWATCH_ environment variables, KEY=VALUE, e.g. --set Check:FailLineUvRms=10 (repeatable).",
        AllowMultipleArgumentsPerToken = false,
    };

    /// <summary>The description of --data, the same for `run` and `demo`.</summary>
    public const string DataDescription = "Folder for the store, logs, inbox, archive, rejected files and summaries (sets Store:Path, Logs:Folder, Inbox:Folder, Inbox:ArchiveFolder, Inbox:RejectedFolder and Summaries:Folder under it; a --set of one of them still wins).";

    /// <summary>The settings --data DIR stands for: every file and folder the service writes, under one folder.</summary>
    public static void AddDataFolder(string folder, Dictionary<string, string?> into)
    {
        into["Store:Path"] = Path.Combine(folder, "humwatch.db");
        into["Logs:Folder"] = Path.Combine(folder, "logs");
        into["Inbox:Folder"] = Path.Combine(folder, "inbox");
        into["Inbox:ArchiveFolder"] = Path.Combine(folder, "archive");
        into["Inbox:RejectedFolder"] = Path.Combine(folder, "rejected");
        into["Summaries:Folder"] = Path.Combine(folder, "summaries");
    }

    /// <summary>Parses repeated KEY=VALUE settings into <paramref name="into"/>; a malformed one is reported and gives false.</summary>
    public static bool TryParseSettings(string command, IEnumerable<string> pairs, Dictionary<string, string?> into, TextWriter stderr)
    {
        foreach (var pair in pairs)
        {
            var equals = pair.IndexOf('=', StringComparison.Ordinal);
            if (equals <= 0)
            {
                stderr.WriteLine($"humwatch {command}: --set takes KEY=VALUE (e.g. Publish:StatusIntervalSeconds=5); got '{pair}'.");
                return false;
            }

            into[pair[..equals].Trim()] = pair[(equals + 1)..];
        }

        return true;
    }

    /// <summary>Layers and binds <paramref name="sources"/>; bad settings are reported, one line per problem, and give null.</summary>
    public static BoundSettings? TryBuild(string command, SettingsSources sources, TextWriter stderr)
    {
        try
        {
            return SettingsBuilder.Build(sources);
        }
        catch (ConfigurationException ex)
        {
            WriteInvalid(command, ex, stderr);
            return null;
        }
    }

    public static void WriteInvalid(string command, ConfigurationException ex, TextWriter stderr)
    {
        stderr.WriteLine($"humwatch {command}: configuration is not valid:");
        foreach (var line in ex.Message.Split(Environment.NewLine))
        {
            stderr.WriteLine($"  {line}");
        }
    }
}
