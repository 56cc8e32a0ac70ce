using System.Globalization;
using HumWatch.Core.Summaries;

namespace HumWatch.Host.Summaries;

/// <summary>
/// Where, when and how large the daily summary files are written (folder, plots, midnight schedule, catch-up), with the
/// rules a day is judged by in <see cref="Day"/> (Core's <see cref="DaySummaryRules"/>). Bound from config section "Summaries".
/// </summary>
public sealed class SummaryOutputOptions
{
    /// <summary>Config section name, "Summaries".</summary>
    public const string SectionName = "Summaries";

    /// <summary>Whether the service writes summaries at local midnight. The default is true.</summary>
    public bool Enabled { get; set; } = true;

    /// <summary>Output folder; each day goes to &lt;Folder&gt;/&lt;yyyy-MM-dd&gt;/. The default is "humwatch-data/summaries".</summary>
    public string Folder { get; set; } = "humwatch-data/summaries";

    /// <summary>Width of each PNG plot, px. The default is 1200 px.</summary>
    public int PlotWidthPx { get; set; } = 1200;

    /// <summary>Height of each PNG plot, px. The default is 500 px.</summary>
    public int PlotHeightPx { get; set; } = 500;

    /// <summary>At start, days up to this many days back that ended while the service was down are rendered. The default is 7.</summary>
    public int CatchUpDays { get; set; } = 7;

    /// <summary>Wait after local midnight before rendering, so the day's last ledger minute is in the store, s. The default is 120 s.</summary>
    public double SettleSeconds { get; set; } = 120;

    /// <summary>Daily limits and episode rules.</summary>
    public DaySummaryRules Day { get; set; } = new();

    /// <summary>One message per problem, each naming the configuration key; empty when valid.</summary>
    public IReadOnlyList<string> Validate(string prefix = SectionName)
    {
        var errors = new List<string>();
        if (string.IsNullOrWhiteSpace(Folder))
        {
            errors.Add($"{prefix}:Folder must name the output folder.");
        }
        else if (Folder.IndexOfAny(Path.GetInvalidPathChars()) >= 0)
        {
            errors.Add($"{prefix}:Folder contains characters not allowed in a path (got \"{Folder}\").");
        }

        if (PlotWidthPx is < 200 or > 8000)
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{prefix}:PlotWidthPx must be between 200 and 8000 px (got {PlotWidthPx})."));
        }

        if (PlotHeightPx is < 150 or > 8000)
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{prefix}:PlotHeightPx must be between 150 and 8000 px (got {PlotHeightPx})."));
        }

        if (CatchUpDays is < 0 or > 366)
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{prefix}:CatchUpDays must be between 0 and 366 days (got {CatchUpDays})."));
        }

        if (!(SettleSeconds >= 0 && SettleSeconds <= 3600))
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{prefix}:SettleSeconds must be between 0 and 3600 s (got {SettleSeconds})."));
        }

        if (Day is null)
        {
            errors.Add($"{prefix}:Day must be an object of daily limits.");
        }
        else
        {
            errors.AddRange(Day.Validate($"{prefix}:Day"));
        }

        return errors;
    }
}
