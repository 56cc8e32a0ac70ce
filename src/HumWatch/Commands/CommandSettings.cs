using System.CommandLine;
using HumWatch.Host.Configuration;

namespace HumWatch.Cli.Commands;

/// <summary>The --config and --set options of one command: added to it, and read back, in one place.</summary>
internal sealed class SettingsArguments
{
    public SettingsArguments(string? configDescription = null)
    {
        Config = configDescription is null ? CommandSettings.ConfigOption() : CommandSettings.ConfigOption(configDescription);
        Set = CommandSettings.SetOption();
    }

    public Option<string[]> Config { get; }

    public Option<string[]> Set { get; }

    /// <summary>Adds both options, after the command's own (so its help lists them last).</summary>
    public Command AddTo(Command command)
    {
        ArgumentNullException.ThrowIfNull(command);
        command.Options.Add(Config);
        command.Options.Add(Set);
        return command;
    }

    /// <summary>The --config files given, in order.</summary>
    public string[] ConfigFiles(ParseResult parse) => parse.GetValue(Config) ?? [];

    /// <summary>The --set pairs given, in order.</summary>
    public string[] Settings(ParseResult parse) => parse.GetValue(Set) ?? [];
}

/// <summary>The settings options of the commands that read settings (run, demo, check, summary), and one way of reporting bad settings.</summary>
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

    /// <summary>
    /// The layers a settings-reading command passes to <see cref="SettingsBuilder"/>, one way for every command: the
    /// overrides are <paramref name="before"/>, then what --data DIR stands for, then each --set, then
    /// <paramref name="after"/> (a command's own options, which win). A malformed --set is reported and gives null.
    /// </summary>
    public static SettingsSources? TrySources(
        string command,
        IReadOnlyList<string> configFiles,
        IEnumerable<string> settings,
        TextWriter stderr,
        string? dataFolder = null,
        IReadOnlyDictionary<string, string?>? before = null,
        IReadOnlyDictionary<string, string?>? after = null)
    {
        var overrides = before is null
            ? new Dictionary<string, string?>(StringComparer.OrdinalIgnoreCase)
            : new Dictionary<string, string?>(before, StringComparer.OrdinalIgnoreCase);
        if (dataFolder is not null)
        {
            AddDataFolder(dataFolder, overrides);
        }

        if (!TryParseSettings(command, settings, overrides, stderr))
        {
            return null;
        }

        foreach (var (key, value) in after ?? new Dictionary<string, string?>())
        {
            overrides[key] = value;
        }

        return new SettingsSources { ConfigFiles = configFiles, Overrides = overrides };
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
