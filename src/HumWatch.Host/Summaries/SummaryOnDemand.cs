using System.Globalization;
using HumWatch.Core.Summaries;
using HumWatch.Host.Store;

namespace HumWatch.Host.Summaries;

/// <summary>One local day the store holds.</summary>
/// <param name="Day">Local date.</param>
/// <param name="HoursInDay">23, 24 or 25.</param>
/// <param name="Streams">Streams with data that day.</param>
/// <param name="SummariesWritten">Stream summaries recorded as written for the day.</param>
public sealed record StoredDay(DateOnly Day, int HoursInDay, IReadOnlyList<string> Streams, int SummariesWritten);

/// <summary>Summaries on demand (the CLI): re-render a day from the store, list the days it holds.</summary>
public static class SummaryOnDemand
{
    /// <summary>Local days in <paramref name="zone"/> that the store holds, oldest first.</summary>
    /// <exception cref="InvalidOperationException">The store cannot be opened.</exception>
    public static IReadOnlyList<StoredDay> ListDays(StoreOptions storeOptions, TimeZoneInfo zone)
    {
        ArgumentNullException.ThrowIfNull(zone);
        using var store = new HumWatchStore(storeOptions, TimeProvider.System);
        var summaries = new SummaryStore(store);
        var result = new List<StoredDay>();
        foreach (var day in store.Activity.Days(zone))
        {
            var (from, to) = LocalDay.RangeUtc(day, zone);
            result.Add(new StoredDay(day, (int)Math.Round((to - from).TotalHours), summaries.StreamsWithLedger(from, to), summaries.RenderedCount(day, zone.Id)));
        }

        return result;
    }

    /// <summary>Writes a day's summaries again (even when already written) and returns them; empty when the store holds nothing for it.</summary>
    /// <param name="storeOptions">Where the store is.</param>
    /// <param name="options">Validated summary options.</param>
    /// <param name="siteName">Shown on the day page.</param>
    /// <param name="zone">Site time zone.</param>
    /// <param name="day">Local date.</param>
    /// <param name="stream">Only this stream; null for all.</param>
    /// <param name="folder">Output root; null for <see cref="SummaryOutputOptions.Folder"/>.</param>
    /// <param name="siteGridHz">The grid the settings name (Analysis:Sources:MainsHz); null when left to the data.</param>
    /// <exception cref="InvalidOperationException">The store cannot be opened.</exception>
    public static IReadOnlyList<DaySummary> Render(StoreOptions storeOptions, SummaryOutputOptions options, string siteName, TimeZoneInfo zone, DateOnly day, string? stream, string? folder, double? siteGridHz = null)
    {
        using var store = new HumWatchStore(storeOptions, TimeProvider.System);
        var renderer = new DailySummaryRenderer(new SummaryStore(store), options, siteName, zone, siteGridHz);
        var rendered = renderer.RenderDay(day, stream, folder, force: true);
        var result = new DaySummary[rendered.Count];
        for (var i = 0; i < result.Length; i++)
        {
            result[i] = rendered[i].Summary;
        }

        return result;
    }

    /// <summary>Folder a day's files go to under <paramref name="root"/>.</summary>
    public static string DayFolder(string root, DateOnly day) => Path.Combine(root, day.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture));
}
