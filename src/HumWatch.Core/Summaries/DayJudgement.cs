using HumWatch.Core.Text;
using System.Globalization;
using HumWatch.Core.Findings;
using static HumWatch.Core.Summaries.SummaryRounding;

namespace HumWatch.Core.Summaries;

/// <summary>A day's affected minutes per kind of source against the daily limits, and the day's verdict.</summary>
internal static class DayJudgement
{
    /// <summary>Kinds of source in the order they are listed and judged.</summary>
    private static readonly FindingCategory[] CategoryOrder =
        [FindingCategory.Mains, FindingCategory.Display, FindingCategory.SiteTone, FindingCategory.Unidentified, FindingCategory.ChannelFault];

    /// <summary>Per kind: affected minutes (per minute the largest of its sources) and the verdict of its limit.</summary>
    public static List<CategorySummary> Categories(IEnumerable<DaySourceTally> tallies, DaySummaryRules rules, int dayMinutes)
    {
        var result = new List<CategorySummary>(CategoryOrder.Length);
        var perMinute = new double[dayMinutes];
        foreach (var category in CategoryOrder)
        {
            Array.Clear(perMinute);
            foreach (var tally in tallies)
            {
                if (tally.Key.Category == category)
                {
                    tally.MaxInto(perMinute);
                }
            }

            var seconds = 0.0;
            for (var i = 0; i < perMinute.Length; i++)
            {
                seconds += perMinute[i];
            }

            var minutes = Round(seconds / 60, 2);
            var limit = rules.LimitFor(category)!;
            result.Add(new CategorySummary(category, minutes, limit.WarnMinutes, limit.FailMinutes, VerdictOf(minutes, limit)));
        }

        return result;
    }

    /// <summary>
    /// The worst verdict of the kinds, with one reason per limit reached; no data when nothing was monitored. Each reason
    /// names the limit under <paramref name="rulesKey"/>, the configuration key the rules were bound from (null: the
    /// rule's own name).
    /// </summary>
    public static (DayVerdict Verdict, List<string> Reasons) Judge(List<CategorySummary> categories, bool hasData, string? rulesKey)
    {
        var reasons = new List<string>();
        if (!hasData)
        {
            return (DayVerdict.NoData, reasons);
        }

        var verdict = DayVerdict.Pass;
        foreach (var c in categories)
        {
            var key = SettingPrefix.Of(rulesKey) + DaySummaryRules.LimitKey(c.Category);
            if (c.Verdict == DayVerdict.Fail)
            {
                verdict = DayVerdict.Fail;
                reasons.Add(string.Create(CultureInfo.InvariantCulture, $"{c.Category.ToText()}: {c.AffectedMinutes:0.##} affected minutes reach the fail limit of {c.FailMinutes:0.##} ({key}:FailMinutes)."));
            }
            else if (c.Verdict == DayVerdict.Warn)
            {
                if (verdict == DayVerdict.Pass)
                {
                    verdict = DayVerdict.Warn;
                }

                reasons.Add(string.Create(CultureInfo.InvariantCulture, $"{c.Category.ToText()}: {c.AffectedMinutes:0.##} affected minutes reach the warn limit of {c.WarnMinutes:0.##} ({key}:WarnMinutes)."));
            }
        }

        return (verdict, reasons);
    }

    private static DayVerdict VerdictOf(double minutes, DailyLimit limit) =>
        limit.FailMinutes is { } fail && minutes >= fail ? DayVerdict.Fail
        : limit.WarnMinutes is { } warn && minutes >= warn ? DayVerdict.Warn
        : DayVerdict.Pass;
}
