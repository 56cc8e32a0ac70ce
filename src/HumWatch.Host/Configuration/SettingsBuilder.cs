using System.Collections;
using Microsoft.Extensions.Configuration;

namespace HumWatch.Host.Configuration;

/// <summary>The one place HumWatch's settings are layered; every command (run, demo, check, summary) goes through it.</summary>
public static class SettingsBuilder
{
    /// <summary>Environment variables with this prefix are settings: HUMWATCH_Publish__StatusIntervalSeconds=5 sets Publish:StatusIntervalSeconds.</summary>
    public const string EnvironmentPrefix = "HUMWATCH_";

    /// <summary>The settings file read from the working directory when present.</summary>
    public const string WorkingDirectoryFile = "appsettings.json";

    /// <summary>Defaults for a fresh machine: everything under ./humwatch-data (the option classes' own defaults fill the rest).</summary>
    public static IReadOnlyDictionary<string, string?> EmbeddedDefaults { get; } = new Dictionary<string, string?>
    {
        ["Store:Path"] = "humwatch-data/humwatch.db",
        ["Logs:Folder"] = "humwatch-data/logs",
        ["Inbox:Folder"] = "humwatch-data/inbox",
        ["Inbox:ArchiveFolder"] = "humwatch-data/archive",
        ["Inbox:RejectedFolder"] = "humwatch-data/rejected",
        ["Summaries:Folder"] = "humwatch-data/summaries",
    };

    /// <summary>Layers the sources and binds every options class once, validating them together.</summary>
    /// <exception cref="ConfigurationException">A file is missing or not valid JSON, or settings fail binding or validation; one line per problem, each naming its file or key.</exception>
    public static BoundSettings Build(SettingsSources sources) => BoundSettings.Bind(Layer(sources));

    /// <summary>Layers, later winning: embedded defaults, ./appsettings.json, each config file in order, HUMWATCH_ environment, overrides.</summary>
    /// <exception cref="ConfigurationException">A file is missing or is not valid JSON; the message names it.</exception>
    public static IConfigurationRoot Layer(SettingsSources sources)
    {
        ArgumentNullException.ThrowIfNull(sources);
        var baseDirectory = sources.BaseDirectory ?? Directory.GetCurrentDirectory();
        var builder = new ConfigurationBuilder().AddInMemoryCollection(EmbeddedDefaults);
        var workingFile = Path.Combine(baseDirectory, WorkingDirectoryFile);
        if (sources.ReadWorkingDirectorySettings && File.Exists(workingFile))
        {
            builder.AddJsonFile(workingFile, optional: false, reloadOnChange: false);
        }

        foreach (var file in sources.ConfigFiles)
        {
            var full = Path.GetFullPath(file, baseDirectory);
            if (!File.Exists(full))
            {
                throw new ConfigurationException($"{file}: configuration file not found.");
            }

            builder.AddJsonFile(full, optional: false, reloadOnChange: false);
        }

        builder.AddInMemoryCollection(FromEnvironment(sources.Environment ?? ProcessEnvironment()));
        builder.AddInMemoryCollection(sources.Overrides);
        try
        {
            return builder.Build();
        }
        catch (Exception ex) when (ex is InvalidDataException or FormatException)
        {
            // The JSON provider's message names the file and the position.
            throw new ConfigurationException($"configuration: {ex.Message}", ex);
        }
    }

    /// <summary>
    /// The settings among environment variables: names starting with HUMWATCH_ (any case), prefix removed, "__" read as
    /// the ":" section separator — the rules of Microsoft.Extensions.Configuration's environment provider, here over
    /// any dictionary so tests need not set process-wide variables.
    /// </summary>
    internal static Dictionary<string, string?> FromEnvironment(IEnumerable<KeyValuePair<string, string?>> variables)
    {
        var settings = new Dictionary<string, string?>(StringComparer.OrdinalIgnoreCase);
        foreach (var (name, value) in variables)
        {
            if (name.Length > EnvironmentPrefix.Length && name.StartsWith(EnvironmentPrefix, StringComparison.OrdinalIgnoreCase))
            {
                settings[name[EnvironmentPrefix.Length..].Replace("__", ConfigurationPath.KeyDelimiter, StringComparison.Ordinal)] = value;
            }
        }

        return settings;
    }

    private static Dictionary<string, string?> ProcessEnvironment()
    {
        var variables = new Dictionary<string, string?>(StringComparer.Ordinal);
        foreach (DictionaryEntry entry in System.Environment.GetEnvironmentVariables())
        {
            if (entry.Key is string name)
            {
                variables[name] = entry.Value as string;
            }
        }

        return variables;
    }
}
