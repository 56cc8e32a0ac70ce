using Serilog.Events;

namespace HumWatch.Host.Composition;

/// <summary>Where and how much HumWatch logs. Bound from section "Logs".</summary>
public sealed class LogOptions
{
    /// <summary>Folder for the daily log files (readable text and compact JSON events). The default is "humwatch-data/logs".</summary>
    public string Folder { get; set; } = "humwatch-data/logs";

    /// <summary>Lowest level written to the console. The default is Information.</summary>
    public LogEventLevel ConsoleLevel { get; set; } = LogEventLevel.Information;

    /// <summary>Lowest level written to the files. The default is Information.</summary>
    public LogEventLevel FileLevel { get; set; } = LogEventLevel.Information;

    /// <summary>Daily files kept. The default is 31.</summary>
    public int RetainedDays { get; set; } = 31;

    public IReadOnlyList<string> Validate(string prefix = "Logs")
    {
        var errors = new List<string>();
        if (string.IsNullOrWhiteSpace(Folder) || Folder.IndexOfAny(Path.GetInvalidPathChars()) >= 0)
        {
            errors.Add($"{prefix}:Folder must be a folder path (got \"{Folder}\").");
        }

        if (RetainedDays is < 1 or > 3650)
        {
            errors.Add($"{prefix}:RetainedDays must be between 1 and 3650 (got {RetainedDays}).");
        }

        return errors;
    }
}
