namespace HumWatch.Host.Store;

/// <summary>Schema of the daily summaries: hourly spectrum parts and the record of rendered days.</summary>
internal static class SummarySchema
{
    /// <summary>
    /// spectrum_parts: additive parts of hourly mean spectra (hour_utc in Unix seconds, psd as little-endian float32).
    /// summary_renders: which (day, time zone, stream) summaries were written, so a day is never written twice unless asked;
    /// stream "" stands for the day's Markdown page.
    /// </summary>
    internal static readonly string[] Migration =
    [
        """
        CREATE TABLE spectrum_parts (
            stream TEXT NOT NULL,
            session TEXT NOT NULL,
            seq INTEGER NOT NULL,
            hour_utc INTEGER NOT NULL,
            bin_width_hz REAL NOT NULL,
            seconds REAL NOT NULL,
            psd BLOB NOT NULL,
            lines TEXT NOT NULL,
            PRIMARY KEY (stream, session, seq)
        ) WITHOUT ROWID
        """,
        "CREATE INDEX ix_spectrum_parts_stream_hour ON spectrum_parts (stream, hour_utc)",
        """
        CREATE TABLE summary_renders (
            day TEXT NOT NULL,
            zone TEXT NOT NULL,
            stream TEXT NOT NULL,
            rendered_utc_ms INTEGER NOT NULL,
            verdict TEXT,
            PRIMARY KEY (day, zone, stream)
        ) WITHOUT ROWID
        """,
    ];
}
