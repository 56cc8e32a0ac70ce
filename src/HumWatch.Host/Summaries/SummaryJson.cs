using System.Text.Json.Serialization;
using HumWatch.Core.Findings;
using HumWatch.Core.Summaries;
using HumWatch.Host.Serialization;

namespace HumWatch.Host.Summaries;

/// <summary>The data behind one day's plots of one stream, written beside the PNGs as &lt;stream&gt;.plots.json.</summary>
/// <param name="V">Schema version, 1.</param>
/// <param name="Stream">Stream id.</param>
/// <param name="Day">Local date.</param>
/// <param name="WidthPx">Width of every PNG, px.</param>
/// <param name="HeightPx">Height of every PNG, px.</param>
/// <param name="Spectrum">The day's mean spectrum; null when no spectrum was stored for the day (no PNG then).</param>
/// <param name="Timeline">Affected minutes per source and hour.</param>
/// <param name="Mains">Mains frequency per minute.</param>
internal sealed record PlotData(int V, string Stream, string Day, int WidthPx, int HeightPx, SpectrumPlot? Spectrum, TimelinePlot Timeline, MainsPlot Mains);

/// <summary>Spectrum plot: PSD bin k at k × BinWidthHz, drawn as log10, with each flagged line marked.</summary>
internal sealed record SpectrumPlot(string File, double BinWidthHz, double Seconds, IReadOnlyList<double> PsdUv2PerHz, IReadOnlyList<LineMark> Marks);

/// <summary>A flagged line marked on the spectrum.</summary>
internal sealed record LineMark(FindingKey Key, string Label, double FrequencyHz);

/// <summary>Timeline plot: one row per source, one column per local hour, cell = affected minutes.</summary>
internal sealed record TimelinePlot(string File, IReadOnlyList<string> HourStartsLocal, IReadOnlyList<TimelineRow> Rows);

/// <summary>Mains plot: one value per <paramref name="StepSeconds"/> from local midnight.</summary>
internal sealed record MainsPlot(string File, DateTimeOffset StartUtc, int StepSeconds, double? MeanHz, double? MinHz, double? MaxHz, IReadOnlyList<double?> Hz)
{
    /// <summary>The grid the axis is centred on when no fundamental was seen: the day's measured grid, else the configured one; null when neither.</summary>
    public double? GridHz { get; init; }

    /// <summary>First hour shown (hours since local midnight): the first monitored hour.</summary>
    public int FromHour { get; init; }

    /// <summary>End of the hours shown (exclusive): the end of the last monitored hour.</summary>
    public int ToHour { get; init; } = 24;
}

/// <summary>Message body of "summary/&lt;stream&gt;": the stream's summary as written to its JSON file. Keys, kinds, severities and verdicts are written as their text forms.</summary>
[JsonSourceGenerationOptions(
    PropertyNamingPolicy = JsonKnownNamingPolicy.CamelCase,
    WriteIndented = true,
    Converters = [typeof(FindingKeyJsonConverter), typeof(FindingCategoryJsonConverter), typeof(AlertSeverityJsonConverter), typeof(DayVerdictJsonConverter)])]
[JsonSerializable(typeof(DaySummary))]
[JsonSerializable(typeof(PlotData))]
internal sealed partial class SummaryJsonContext : JsonSerializerContext
{
    /// <summary>The context summary files, and messages are written with: characters as themselves.</summary>
    public static SummaryJsonContext Output => field ??= new(OutputText.JsonOptions(Default.Options));
}
