using System.Globalization;

namespace HumWatch.Core.Summaries;

/// <summary>Local calendar days of a site in UTC terms. Days are 23 or 25 h long where clocks change.</summary>
public static class LocalDay
{
    /// <summary>UTC range [from, to) of a local day; a midnight skipped by a clock change starts the day at the first valid time.</summary>
    public static (DateTimeOffset FromUtc, DateTimeOffset ToUtc) RangeUtc(DateOnly day, TimeZoneInfo zone)
    {
        ArgumentNullException.ThrowIfNull(zone);
        return (StartUtc(day, zone), StartUtc(day.AddDays(1), zone));
    }

    /// <summary>The local date at a UTC instant.</summary>
    public static DateOnly DayOf(DateTimeOffset utc, TimeZoneInfo zone)
    {
        ArgumentNullException.ThrowIfNull(zone);
        return DateOnly.FromDateTime(TimeZoneInfo.ConvertTime(utc, zone).DateTime);
    }

    /// <summary>Site time of a UTC instant as ISO 8601 with offset, to the minute: "2026-10-25T02:00+01:00".</summary>
    public static string LocalText(DateTimeOffset utc, TimeZoneInfo zone)
    {
        ArgumentNullException.ThrowIfNull(zone);
        return TimeZoneInfo.ConvertTime(utc, zone).ToString("yyyy-MM-dd'T'HH:mmzzz", CultureInfo.InvariantCulture);
    }

    private static DateTimeOffset StartUtc(DateOnly day, TimeZoneInfo zone)
    {
        var local = day.ToDateTime(TimeOnly.MinValue, DateTimeKind.Unspecified);
        while (zone.IsInvalidTime(local))
        {
            local = local.AddMinutes(15);
        }

        return new DateTimeOffset(TimeZoneInfo.ConvertTimeToUtc(local, zone), TimeSpan.Zero);
    }
}
