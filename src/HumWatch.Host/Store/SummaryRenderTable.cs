using System.Globalization;
using HumWatch.Core.Summaries;

namespace HumWatch.Host.Store;

/// <summary>
/// The <c>summary_renders</c> table: which (day, time zone, stream) summaries were written, so a day is never written
/// twice unless asked; stream "" stands for the day's page.
/// </summary>
internal sealed class SummaryRenderTable(StoreConnection connection)
{
    /// <summary>Whether the summary of (day, zone, stream) was written; stream "" is the day's page.</summary>
    public bool IsRendered(DateOnly day, string zone, string stream)
    {
        ArgumentNullException.ThrowIfNull(stream);
        return Count(day, zone, stream) > 0;
    }

    /// <summary>How many summaries (streams, not pages) were recorded as written for a day.</summary>
    public int RenderedCount(DateOnly day, string zone) => Count(day, zone, null);

    /// <summary>Records that the summary of (day, zone, stream) was written (after its files are in place).</summary>
    public void MarkRendered(DateOnly day, string zone, string stream, DayVerdict? verdict) => connection.Run(c =>
    {
        using var command = Sql.Command(c, """
            INSERT INTO summary_renders (day, zone, stream, rendered_utc_ms, verdict) VALUES (@day, @zone, @stream, @utc, @verdict)
            ON CONFLICT (day, zone, stream) DO UPDATE SET rendered_utc_ms = excluded.rendered_utc_ms, verdict = excluded.verdict
            """);
        Sql.Add(command, "@day", DayText(day));
        Sql.Add(command, "@zone", zone);
        Sql.Add(command, "@stream", stream);
        Sql.Add(command, "@utc", connection.TimeProvider.GetUtcNow().ToUnixTimeMilliseconds());
        Sql.Add(command, "@verdict", verdict?.ToText());
        return command.ExecuteNonQuery();
    });

    /// <summary>
    /// The store_claims name that decides which instance renders the summaries of (day, zone): one instance writes a
    /// whole day (its stream files and the page that links them), so the claim is per day, not per stream.
    /// </summary>
    public static string ClaimName(DateOnly day, string zone) => $"summary/{DayText(day)}/{zone}";

    /// <summary>Rows of (day, zone) for one stream, or for every stream (not the page) when <paramref name="stream"/> is null.</summary>
    private int Count(DateOnly day, string zone, string? stream) => connection.Run(c =>
    {
        using var command = Sql.Command(c, stream is null
            ? "SELECT count(*) FROM summary_renders WHERE day = @day AND zone = @zone AND stream <> ''"
            : "SELECT count(*) FROM summary_renders WHERE day = @day AND zone = @zone AND stream = @stream");
        Sql.Add(command, "@day", DayText(day));
        Sql.Add(command, "@zone", zone);
        if (stream is not null)
        {
            Sql.Add(command, "@stream", stream);
        }

        return checked((int)(Sql.Int64(command.ExecuteScalar()) ?? 0));
    });

    private static string DayText(DateOnly day) => day.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture);
}
