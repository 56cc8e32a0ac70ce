namespace HumWatch.Host.Configuration;

/// <summary>
/// Where one command's settings come from. <see cref="SettingsBuilder"/> layers them, later winning: embedded defaults,
/// ./appsettings.json, each of <see cref="ConfigFiles"/> in order, HUMWATCH_ environment variables, <see cref="Overrides"/>.
/// </summary>
public sealed record SettingsSources
{
    /// <summary>JSON files layered over the defaults and ./appsettings.json, in order; relative paths resolve against <see cref="BaseDirectory"/>.</summary>
    public IReadOnlyList<string> ConfigFiles { get; init; } = [];

    /// <summary>Key/value settings applied last (--set and a command's own options such as check's --mains).</summary>
    public IReadOnlyDictionary<string, string?> Overrides { get; init; } = new Dictionary<string, string?>();

    /// <summary>Whether appsettings.json in <see cref="BaseDirectory"/> is read when present. The default is true.</summary>
    public bool ReadWorkingDirectorySettings { get; init; } = true;

    /// <summary>Stands in for the working directory (appsettings.json, relative --config paths). Null, the default, is the process's current directory.</summary>
    public string? BaseDirectory { get; init; }

    /// <summary>
    /// Environment variables to take HUMWATCH_ settings from. Null, the default, reads the process environment; tests pass
    /// their own so they never touch the process-wide one.
    /// </summary>
    public IReadOnlyDictionary<string, string?>? Environment { get; init; }

    /// <summary>No ./appsettings.json and no environment: only the embedded defaults, <paramref name="configFiles"/> and <paramref name="overrides"/> (tests, benchmarks).</summary>
    public static SettingsSources Isolated(IReadOnlyDictionary<string, string?>? overrides = null, IReadOnlyList<string>? configFiles = null) => new()
    {
        ConfigFiles = configFiles ?? [],
        Overrides = overrides ?? new Dictionary<string, string?>(),
        ReadWorkingDirectorySettings = false,
        Environment = new Dictionary<string, string?>(),
    };
}
