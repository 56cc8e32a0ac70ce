using HumWatch.Core.Text;

namespace HumWatch.Core.Summaries;

/// <summary>A stream's day, or one kind of source over it, against <see cref="DaySummaryRules"/> limits.</summary>
public enum DayVerdict
{
    /// <summary>Nothing was monitored that day (a whole day only, never a kind of source).</summary>
    NoData = 0,

    /// <summary>Below every warn limit.</summary>
    Pass,

    /// <summary>A warn limit reached, no fail limit.</summary>
    Warn,

    /// <summary>A fail limit reached.</summary>
    Fail,
}

/// <summary>Text forms of <see cref="DayVerdict"/> used in summary JSON, the day page, logs and the store.</summary>
public static class DayVerdictText
{
    /// <summary>The table: "no data", "pass", "warn", "fail" (an undefined value is written "no data").</summary>
    public static TextForms<DayVerdict> Forms { get; } = new(
        DayVerdict.NoData,
        (DayVerdict.NoData, "no data"),
        (DayVerdict.Pass, "pass"),
        (DayVerdict.Warn, "warn"),
        (DayVerdict.Fail, "fail"));

    /// <summary>"no data", "pass", "warn" or "fail".</summary>
    public static string ToText(this DayVerdict verdict) => Forms.ToText(verdict);

    /// <summary>Parses the text form; unknown text gives false.</summary>
    public static bool TryParse(string? text, out DayVerdict verdict) => Forms.TryParse(text, out verdict);
}
