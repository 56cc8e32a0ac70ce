using System.Collections;
using System.Globalization;
using System.Text;
using System.Text.Json;
using Microsoft.Extensions.Configuration;

namespace HumWatch.Host.Configuration;

/// <summary>The one place HumWatch's settings are layered; every command (run, demo, check, summary) goes through it.</summary>
public static class SettingsBuilder
{
    /// <summary>Environment variables with this prefix are settings: HUMWATCH_Publish__StatusIntervalSeconds=5 sets Publish:StatusIntervalSeconds.</summary>
    public const string EnvironmentPrefix = "HUMWATCH_";

    /// <summary>The settings file read from the working directory when present.</summary>
    public const string WorkingDirectoryFile = "appsettings.json";

    /// <summary>Largest settings file read (1 MiB); the full example with every setting is under 5 KiB.</summary>
    public const int MaxFileBytes = 1 << 20;

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
    /// <exception cref="ConfigurationException">A file is missing or not valid JSON, or settings are unknown, fail binding or validation; one line per problem, each naming its file or key.</exception>
    public static BoundSettings Build(SettingsSources sources)
    {
        var (root, names, environmentProblems) = LayerNamed(sources);
        return BoundSettings.Bind(root, key => SourceOf(root, names, key), environmentProblems);
    }

    /// <summary>Layers, later winning: embedded defaults, ./appsettings.json, each config file in order, HUMWATCH_ environment, overrides.</summary>
    /// <exception cref="ConfigurationException">A file is missing, unreadable or not valid JSON; the message names it (and the line and column).</exception>
    public static IConfigurationRoot Layer(SettingsSources sources) => LayerNamed(sources).Root;

    /// <summary>The layered configuration, per provider in order how to name it in a message, and mistyped HUMWATCH_ variables.</summary>
    private static (IConfigurationRoot Root, List<string> Names, List<string> EnvironmentProblems) LayerNamed(SettingsSources sources)
    {
        ArgumentNullException.ThrowIfNull(sources);
        var baseDirectory = sources.BaseDirectory ?? Directory.GetCurrentDirectory();
        var names = new List<string> { "built-in defaults" };
        var builder = new ConfigurationBuilder().AddInMemoryCollection(EmbeddedDefaults);
        var workingFile = Path.Combine(baseDirectory, WorkingDirectoryFile);
        if (sources.ReadWorkingDirectorySettings && File.Exists(workingFile))
        {
            AddJsonFile(builder, names, workingFile, workingFile);
        }

        foreach (var file in sources.ConfigFiles)
        {
            var full = Path.GetFullPath(file, baseDirectory);
            if (!File.Exists(full))
            {
                throw new ConfigurationException(Directory.Exists(full) ? $"{file}: is a folder, not a configuration file." : $"{file}: configuration file not found.");
            }

            AddJsonFile(builder, names, full, file);
        }

        var environmentProblems = new List<string>();
        builder.AddInMemoryCollection(FromEnvironment(sources.Environment ?? ProcessEnvironment(), environmentProblems));
        names.Add(EnvironmentSource);
        builder.AddInMemoryCollection(sources.Overrides);
        names.Add("--set");
        try
        {
            return (builder.Build(), names, environmentProblems);
        }
        catch (Exception ex) when (ex is InvalidDataException or FormatException or IOException or UnauthorizedAccessException)
        {
            // What the pre-check in AddJsonFile does not catch (the JSON provider's own rules, a file changed meanwhile).
            var inner = ex.InnerException is { } cause && ex is InvalidDataException ? $"{ex.Message} {cause.Message}" : ex.Message;
            throw new ConfigurationException($"configuration: {inner}", ex);
        }
    }

    private const string EnvironmentSource = "environment";

    /// <summary>
    /// Adds one JSON settings file after reading it once here: the JSON provider's own message on bad JSON names
    /// neither the file as typed nor a line a person counts from 1.
    /// </summary>
    private static void AddJsonFile(IConfigurationBuilder builder, List<string> names, string fullPath, string shownAs)
    {
        byte[] bytes;
        try
        {
            // Checked before reading: a settings file is a few KiB, and a huge one must not be read into memory whole.
            var length = new FileInfo(fullPath).Length;
            if (length > MaxFileBytes)
            {
                throw new ConfigurationException($"{shownAs}: the configuration file has {length} bytes; more than {MaxFileBytes} (1 MiB) is not a settings file.");
            }

            bytes = File.ReadAllBytes(fullPath);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new ConfigurationException($"{shownAs}: cannot read the configuration file: {ex.Message}", ex);
        }

        if (JsonProblem(bytes) is { } problem)
        {
            throw new ConfigurationException($"{shownAs}: {problem}");
        }

        builder.AddJsonFile(fullPath, optional: false, reloadOnChange: false);
        names.Add(shownAs);
    }

    /// <summary>Why <paramref name="utf8"/> is not a settings file (invalid JSON with line and column, not an object), or null.</summary>
    internal static string? JsonProblem(byte[] utf8)
    {
        // The options of Microsoft.Extensions.Configuration.Json's parser: comments and trailing commas allowed.
        var options = new JsonDocumentOptions { CommentHandling = JsonCommentHandling.Skip, AllowTrailingCommas = true, AllowDuplicateProperties = false };
        try
        {
            using var document = JsonDocument.Parse(utf8, options);
            return document.RootElement.ValueKind == JsonValueKind.Object
                ? null
                : $"a configuration file holds one JSON object {{ … }}, not {Article(document.RootElement.ValueKind)}.";
        }
        catch (JsonException ex)
        {
            var line = (int)(ex.LineNumber ?? 0);
            var column = Column(utf8, line, (int)(ex.BytePositionInLine ?? 0));
            return string.Create(CultureInfo.InvariantCulture, $"not valid JSON at line {line + 1}, column {column}: {Reason(ex.Message)}");
        }
    }

    /// <summary>The 1-based character column of a byte position in a 0-based line (a multi-byte character counts once).</summary>
    private static int Column(byte[] utf8, int line, int bytePosition)
    {
        var start = 0;
        for (var seen = 0; seen < line && start < utf8.Length; start++)
        {
            if (utf8[start] == (byte)'\n')
            {
                seen++;
            }
        }

        var skip = start == 0 && utf8.AsSpan().StartsWith(Encoding.UTF8.Preamble) ? Encoding.UTF8.Preamble.Length : 0;
        var from = start + skip;
        var length = Math.Clamp(bytePosition - skip, 0, utf8.Length - from);
        return Encoding.UTF8.GetCharCount(utf8, from, length) + 1;
    }

    /// <summary>System.Text.Json's message without its own "Path: … | LineNumber: … | BytePositionInLine: …" tail.</summary>
    private static string Reason(string message)
    {
        foreach (var tail in new[] { " Path: ", " LineNumber: " })
        {
            var at = message.IndexOf(tail, StringComparison.Ordinal);
            if (at > 0)
            {
                return message[..at].TrimEnd();
            }
        }

        return message;
    }

    private static string Article(JsonValueKind kind) => kind switch
    {
        JsonValueKind.Array => "an array",
        JsonValueKind.String => "a string",
        JsonValueKind.Number => "a number",
        JsonValueKind.True or JsonValueKind.False => "true or false",
        _ => "null",
    };

    /// <summary>Where the winning value of <paramref name="key"/> was set: a file as given, an environment variable or --set.</summary>
    private static string? SourceOf(IConfigurationRoot root, List<string> names, string key)
    {
        var providers = root.Providers.ToList();
        for (var i = providers.Count - 1; i >= 0; i--)
        {
            if (providers[i].TryGet(key, out _) && i < names.Count)
            {
                return names[i] switch
                {
                    EnvironmentSource => $"environment variable {EnvironmentPrefix}{key.Replace(ConfigurationPath.KeyDelimiter, "__", StringComparison.Ordinal)}",
                    var name => name,
                };
            }
        }

        return null;
    }

    /// <summary>
    /// The settings among environment variables: names starting with HUMWATCH_ (any case), prefix removed, "__" read as
    /// the ":" section separator — the rules of Microsoft.Extensions.Configuration's environment provider, here over
    /// any dictionary so tests need not set process-wide variables. A name without "__" cannot be a setting (every
    /// setting is Section:Key) and is left alone: HumWatch's own switches such as HUMWATCH_MEASURE for the tests. One
    /// that starts with a section name and one underscore (HUMWATCH_Alerts_RaiseAfterFrames) is a setting mistyped and
    /// is added to <paramref name="problems"/>.
    /// </summary>
    internal static Dictionary<string, string?> FromEnvironment(IEnumerable<KeyValuePair<string, string?>> variables, List<string>? problems = null)
    {
        var settings = new Dictionary<string, string?>(StringComparer.OrdinalIgnoreCase);
        foreach (var (name, value) in variables)
        {
            if (name.Length <= EnvironmentPrefix.Length || !name.StartsWith(EnvironmentPrefix, StringComparison.OrdinalIgnoreCase))
            {
                continue;
            }

            var rest = name[EnvironmentPrefix.Length..];
            if (!rest.Contains("__", StringComparison.Ordinal))
            {
                var underscore = rest.IndexOf('_', StringComparison.Ordinal);
                if (problems is not null && underscore > 0 && SettingsSchema.IsSection(rest[..underscore]))
                {
                    problems.Add($"environment variable {name} is not a setting: a section and its key are joined by two underscores, e.g. {EnvironmentPrefix}{rest[..underscore]}__{rest[(underscore + 1)..]}");
                }

                continue;
            }

            settings[rest.Replace("__", ConfigurationPath.KeyDelimiter, StringComparison.Ordinal)] = value;
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
