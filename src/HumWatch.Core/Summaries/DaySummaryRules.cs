using HumWatch.Core.Text;
using System.Globalization;
using HumWatch.Core.Findings;

namespace HumWatch.Core.Summaries;

/// <summary>Daily limits for one kind of source: affected minutes per local day before the room's day is "warn" or "fail".</summary>
public sealed class DailyLimit
{
    /// <summary>Affected minutes at or above which the day is "warn"; null for no warn level.</summary>
    public double? WarnMinutes { get; set; }

    /// <summary>Affected minutes at or above which the day is "fail"; null for no fail level.</summary>
    public double? FailMinutes { get; set; }

    internal void Validate(string prefix, List<string> errors)
    {
        if (WarnMinutes is { } warn && !(warn >= 0 && warn <= 1500))
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{prefix}:WarnMinutes must be between 0 and 1500 minutes (got {warn})."));
        }

        if (FailMinutes is { } fail && !(fail >= 0 && fail <= 1500))
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{prefix}:FailMinutes must be between 0 and 1500 minutes (got {fail})."));
        }

        if (WarnMinutes is { } w && FailMinutes is { } f && w > f)
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{prefix}:WarnMinutes ({w}) must not exceed {prefix}:FailMinutes ({f})."));
        }
    }
}

/// <summary>
/// The rules a stream's day is summarised and judged by: daily limits per kind of source, episode rules, list lengths.
/// Pure figures (what files are written, where and when is the Host's SummaryOutputOptions). Bound from config section "Summaries:Day".
/// </summary>
public sealed class DaySummaryRules
{
    /// <summary>Mains and its harmonics. The defaults are warn at 60 and fail at 240 affected minutes.</summary>
    public DailyLimit Mains { get; set; } = new() { WarnMinutes = 60, FailMinutes = 240 };

    /// <summary>Display refresh lines. The defaults are warn at 30 and fail at 120 affected minutes.</summary>
    public DailyLimit Display { get; set; } = new() { WarnMinutes = 30, FailMinutes = 120 };

    /// <summary>Configured site tones. The defaults are warn at 30 and fail at 120 affected minutes.</summary>
    public DailyLimit SiteTone { get; set; } = new() { WarnMinutes = 30, FailMinutes = 120 };

    /// <summary>Unidentified lines. The defaults are warn at 30 and fail at 180 affected minutes.</summary>
    public DailyLimit Unidentified { get; set; } = new() { WarnMinutes = 30, FailMinutes = 180 };

    /// <summary>Channel faults (flat, clipped, non-finite). The defaults are warn at 10 and fail at 60 affected minutes.</summary>
    public DailyLimit ChannelFault { get; set; } = new() { WarnMinutes = 10, FailMinutes = 60 };

    /// <summary>A minute belongs to an episode when the source was present for at least this long in it, s. The default is 20 s.</summary>
    public double EpisodeMinuteMinSeconds { get; set; } = 20;

    /// <summary>Runs of episode minutes separated by at most this many quiet minutes count as one episode. The default is 2.</summary>
    public int EpisodeBridgeMinutes { get; set; } = 2;

    /// <summary>Channels listed as worst per stream and per source. The default is 5.</summary>
    public int WorstChannelCount { get; set; } = 5;

    /// <summary>Episodes listed per source (longest first). The default is 5.</summary>
    public int EpisodesListed { get; set; } = 5;

    /// <summary>One message per problem, each naming the configuration key; empty when valid.</summary>
    public IReadOnlyList<string> Validate(string? prefix = null)
    {
        var at = SettingPrefix.Of(prefix);
        var errors = new List<string>();
        foreach (var (name, limit) in Limits())
        {
            if (limit is null)
            {
                errors.Add($"{at}{name} must be given (an object with WarnMinutes and FailMinutes).");
                continue;
            }

            limit.Validate($"{at}{name}", errors);
        }

        if (!(EpisodeMinuteMinSeconds > 0 && EpisodeMinuteMinSeconds <= 60))
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{at}EpisodeMinuteMinSeconds must be above 0 and at most 60 s (got {EpisodeMinuteMinSeconds})."));
        }

        if (EpisodeBridgeMinutes is < 0 or > 60)
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{at}EpisodeBridgeMinutes must be between 0 and 60 minutes (got {EpisodeBridgeMinutes})."));
        }

        if (WorstChannelCount is < 1 or > 64)
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{at}WorstChannelCount must be between 1 and 64 (got {WorstChannelCount})."));
        }

        if (EpisodesListed is < 0 or > 100)
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{at}EpisodesListed must be between 0 and 100 (got {EpisodesListed})."));
        }

        return errors;
    }

    /// <summary>The limit that applies to a category; null for <see cref="FindingCategory.All"/>.</summary>
    public DailyLimit? LimitFor(FindingCategory category) => category switch
    {
        FindingCategory.Mains => Mains,
        FindingCategory.Display => Display,
        FindingCategory.SiteTone => SiteTone,
        FindingCategory.Unidentified => Unidentified,
        FindingCategory.ChannelFault => ChannelFault,
        _ => null,
    };

    /// <summary>Configuration key of a category's limit, e.g. "SiteTone".</summary>
    public static string LimitKey(FindingCategory category) => category switch
    {
        FindingCategory.Mains => nameof(Mains),
        FindingCategory.Display => nameof(Display),
        FindingCategory.SiteTone => nameof(SiteTone),
        FindingCategory.Unidentified => nameof(Unidentified),
        FindingCategory.ChannelFault => nameof(ChannelFault),
        _ => "All",
    };

    private (string Name, DailyLimit? Limit)[] Limits() =>
    [
        (nameof(Mains), Mains), (nameof(Display), Display), (nameof(SiteTone), SiteTone),
        (nameof(Unidentified), Unidentified), (nameof(ChannelFault), ChannelFault),
    ];
}
