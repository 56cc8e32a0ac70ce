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
    /// <summary>"no data", "pass", "warn" or "fail".</summary>
    public static string ToText(this DayVerdict verdict) => verdict switch
    {
        DayVerdict.Pass => "pass",
        DayVerdict.Warn => "warn",
        DayVerdict.Fail => "fail",
        _ => "no data",
    };

    /// <summary>Parses the text form; unknown text gives false.</summary>
    public static bool TryParse(string? text, out DayVerdict verdict)
    {
        verdict = text switch
        {
            "pass" => DayVerdict.Pass,
            "warn" => DayVerdict.Warn,
            "fail" => DayVerdict.Fail,
            _ => DayVerdict.NoData,
        };
        return verdict != DayVerdict.NoData || text == "no data";
    }
}
