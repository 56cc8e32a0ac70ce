using System.Globalization;
using HumWatch.Core.Summaries;
using ScottPlot;

namespace HumWatch.Host.Summaries;

/// <summary>Draws a stream's day with ScottPlot: mean spectrum (log scale, flagged lines marked), hour-by-source timeline, mains frequency.</summary>
internal static partial class SummaryPlots
{
    /// <summary>The colour key of the timeline runs from none to every minute of an hour.</summary>
    internal const double TimelineKeyMaxMinutes = 60;

    /// <summary>Label of the timeline's colour key.</summary>
    internal const string TimelineKeyLabel = "affected minutes in the hour";

    /// <summary>Label of the spectrum's y axis: the quantity in words, then its unit.</summary>
    internal const string SpectrumYLabel = "power density, µV²/Hz (log scale)";

    /// <summary>Text of the mains plot when the day has no estimate of the fundamental.</summary>
    internal const string FundamentalNotSeen = "mains fundamental not seen";

    // Colour of the mains track, so that a reader of the SVG (the tests) can tell it from grid lines and bands.
    private static readonly Color TrackColor = Colors.Navy;

    /// <summary>The plot data of a summary; the spectrum is included when stored.</summary>
    /// <param name="summary">The day.</param>
    /// <param name="spectrum">The day's mean spectrum, when stored.</param>
    /// <param name="widthPx">PNG width.</param>
    /// <param name="heightPx">PNG height.</param>
    /// <param name="siteGridHz">The grid the settings name (Analysis:Sources:MainsHz); null when they leave it to the data.</param>
    /// <param name="monitoredMinutes">First and last minute of the day (from local midnight) with analysed data; null when none.</param>
    public static PlotData DataFor(DaySummary summary, DaySpectrum? spectrum, int widthPx, int heightPx, double? siteGridHz = null, (int First, int Last)? monitoredMinutes = null)
    {
        ArgumentNullException.ThrowIfNull(summary);
        SpectrumPlot? spectrumPlot = null;
        if (spectrum is not null)
        {
            var marks = new List<LineMark>();
            foreach (var source in summary.Sources)
            {
                if (source.FrequencyHz is { } hz)
                {
                    marks.Add(new LineMark(source.Key, source.Label, hz));
                }
            }

            var psd = new double[spectrum.MeanPsdUv2PerHz.Count];
            for (var k = 0; k < psd.Length; k++)
            {
                // Six significant digits: enough for a log plot, and stable text.
                psd[k] = RoundSignificant(spectrum.MeanPsdUv2PerHz[k], 6);
            }

            spectrumPlot = new SpectrumPlot(FileName(summary.Stream, "spectrum"), spectrum.BinWidthHz, DaySummarizerRound(spectrum.Seconds), psd, marks);
        }

        var track = summary.Mains;
        var (fromHour, toHour) = ShownHours(track, summary.Timeline.HourStartsLocal.Count, monitoredMinutes);
        return new PlotData(
            DaySummarizer.Version,
            summary.Stream,
            summary.Day,
            widthPx,
            heightPx,
            spectrumPlot,
            new TimelinePlot(FileName(summary.Stream, "timeline"), summary.Timeline.HourStartsLocal, summary.Timeline.Rows),
            new MainsPlot(FileName(summary.Stream, "mains"), summary.DayStartUtc, track.StepSeconds, track.MeanHz, track.MinHz, track.MaxHz, track.Hz)
            {
                // The grid the day's track belongs to; else the one the settings name.
                GridHz = track.NominalHz ?? siteGridHz,
                FromHour = fromHour,
                ToHour = toHour,
            });
    }

    /// <summary>File name of one plot of a stream: "&lt;stream&gt;.&lt;kind&gt;.png".</summary>
    public static string FileName(string stream, string kind) => $"{stream}.{kind}.png";

    /// <summary>Renders every plot of <paramref name="data"/> into <paramref name="folder"/>.</summary>
    public static void Render(PlotData data, string folder)
    {
        ArgumentNullException.ThrowIfNull(data);
        if (data.Spectrum is { } spectrum)
        {
            Save(DrawSpectrum(data, spectrum), Path.Combine(folder, spectrum.File), data);
        }

        Save(DrawTimeline(data, data.Timeline), Path.Combine(folder, data.Timeline.File), data);
        Save(DrawMains(data, data.Mains), Path.Combine(folder, data.Mains.File), data);
    }

    /// <summary>One plot as SVG, drawn exactly as its PNG: lets a reader (the tests) find texts and positions.</summary>
    /// <param name="data">The plot data.</param>
    /// <param name="kind">"spectrum", "timeline" or "mains".</param>
    internal static string Svg(PlotData data, string kind)
    {
        ArgumentNullException.ThrowIfNull(data);
        using var plot = kind switch
        {
            "spectrum" => DrawSpectrum(data, data.Spectrum ?? throw new ArgumentException("The data holds no spectrum.", nameof(data))),
            "timeline" => DrawTimeline(data, data.Timeline),
            "mains" => DrawMains(data, data.Mains),
            _ => throw new ArgumentOutOfRangeException(nameof(kind), kind, "Plot kind must be spectrum, timeline or mains."),
        };
        return plot.GetSvgXml(data.WidthPx, data.HeightPx);
    }

    /// <summary>"40 s", "25 min" or "1.5 h": minutes under an hour, so that a short day never reads "0 h".</summary>
    internal static string DurationText(double seconds)
    {
        var c = CultureInfo.InvariantCulture;
        return seconds switch
        {
            < 59.5 => string.Create(c, $"{seconds:0} s"),
            < 3570 => string.Create(c, $"{seconds / 60:0} min"),
            _ => string.Create(c, $"{seconds / 3600:0.#} h"),
        };
    }

    /// <summary>
    /// A log-axis tick label for 10^<paramref name="exponent"/> µV²/Hz written out ("0.01", "1000"), as a technician reads
    /// a scale; beyond a millionth or a million, as a power of ten with a superscript ("10⁻⁸"), never "1E-8".
    /// </summary>
    internal static string DecadeLabel(double exponent)
    {
        var e = (int)Math.Round(exponent);
        if (e is >= -6 and <= 6)
        {
            return Math.Pow(10, e).ToString("0.######", CultureInfo.InvariantCulture);
        }

        const string Superscripts = "⁰¹²³⁴⁵⁶⁷⁸⁹";
        var digits = Math.Abs(e).ToString(CultureInfo.InvariantCulture);
        var text = new System.Text.StringBuilder("10");
        if (e < 0)
        {
            text.Append('⁻');
        }

        foreach (var d in digits)
        {
            text.Append(Superscripts[d - '0']);
        }

        return text.ToString();
    }

    private static void Save(Plot plot, string path, PlotData data)
    {
        using (plot)
        {
            var bytes = plot.GetImageBytes(data.WidthPx, data.HeightPx, ImageFormat.Png);
            AtomicFile.Write(path, bytes);
        }
    }

    private static Plot DrawSpectrum(PlotData data, SpectrumPlot spectrum)
    {
        var plot = new Plot();
        var xs = new List<double>(spectrum.PsdUv2PerHz.Count);
        var ys = new List<double>(spectrum.PsdUv2PerHz.Count);
        var floor = double.PositiveInfinity;
        for (var k = 1; k < spectrum.PsdUv2PerHz.Count; k++)
        {
            // Log scale: plot log10 of the density; empty bins are left out.
            var value = spectrum.PsdUv2PerHz[k];
            if (value > 0)
            {
                xs.Add(k * spectrum.BinWidthHz);
                ys.Add(Math.Log10(value));
                floor = Math.Min(floor, Math.Log10(value));
            }
        }

        var line = plot.Add.ScatterLine(xs.ToArray(), ys.ToArray());
        line.LineWidth = 1;

        // Labels go inside the plot, above the spectrum, on up to three staggered rows so that close lines (50 and 60 Hz)
        // and the title do not print over each other.
        const double RowDecades = 0.35;
        var top = ys.Count > 0 ? ys.Max() : 0;
        var bottom = double.IsFinite(floor) ? floor : top - 1;
        var rows = Math.Min(3, spectrum.Marks.Count);
        var labelTop = top + 0.3 + (rows * RowDecades);
        var marks = spectrum.Marks.OrderBy(m => m.FrequencyHz).ToList();
        for (var i = 0; i < marks.Count; i++)
        {
            var mark = marks[i];
            plot.Add.VerticalLine(mark.FrequencyHz, 1, Colors.Red, LinePattern.Dashed);
            var text = plot.Add.Text(string.Create(CultureInfo.InvariantCulture, $"{mark.Label} ({mark.FrequencyHz:0.##} Hz)"), mark.FrequencyHz, labelTop - ((i % 3) * RowDecades));
            text.LabelFontSize = 10;
            text.LabelFontColor = Colors.DarkRed;
            text.LabelBackgroundColor = Colors.White.WithAlpha(0.85);
            text.LabelAlignment = Alignment.UpperLeft;
        }

        plot.Axes.SetLimitsY(bottom - 0.2, labelTop + 0.1);

        // Frequencies start at 0 Hz: the automatic margin would otherwise put a negative-frequency tick left of it.
        var highestHz = Math.Max(spectrum.BinWidthHz, (spectrum.PsdUv2PerHz.Count - 1) * spectrum.BinWidthHz);
        plot.Axes.SetLimitsX(0, highestHz);
        plot.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic
        {
            LabelFormatter = static hz => hz.ToString("0.##", CultureInfo.InvariantCulture),
            // Half the usual density: a tick every 2 Hz across a wide plot reads as a comb.
            TickDensity = 0.5,
        };

        var ticks = new ScottPlot.TickGenerators.NumericAutomatic
        {
            MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
            IntegerTicksOnly = true,
            LabelFormatter = DecadeLabel,
        };
        plot.Axes.Left.TickGenerator = ticks;
        plot.Title($"{data.Stream} {data.Day}: mean spectrum ({DurationText(spectrum.Seconds)} analysed)");
        plot.XLabel("frequency, Hz");
        plot.YLabel(SpectrumYLabel);
        return plot;
    }

    private static Plot DrawTimeline(PlotData data, TimelinePlot timeline)
    {
        var plot = new Plot();
        var hours = timeline.HourStartsLocal.Count;
        var rows = timeline.Rows;
        var key = new MinutesKey();
        for (var r = 0; r < rows.Count; r++)
        {
            // Row 0 (most affected) at the top.
            var y = rows.Count - 1 - r;
            for (var h = 0; h < rows[r].Minutes.Count; h++)
            {
                var minutes = rows[r].Minutes[h];
                if (minutes <= 0)
                {
                    continue;
                }

                var rect = plot.Add.Rectangle(h, h + 1, y, y + 1);
                rect.FillColor = key.Colormap.GetColor(Math.Clamp(minutes / TimelineKeyMaxMinutes, 0, 1));
                rect.LineWidth = 0;
            }
        }

        // The colour key: the same colour map, labelled in minutes from none to all 60 of an hour.
        var colorBar = plot.Add.ColorBar(key);
        colorBar.Label = TimelineKeyLabel;
        colorBar.Axis.TickGenerator = new ScottPlot.TickGenerators.NumericManual([0, 15, 30, 45, 60], ["0", "15", "30", "45", "60"]);

        var yPositions = new double[rows.Count];
        var yLabels = new string[rows.Count];
        for (var r = 0; r < rows.Count; r++)
        {
            yPositions[r] = rows.Count - 1 - r + 0.5;
            yLabels[r] = rows[r].Label;
        }

        var xPositions = new List<double>();
        var xLabels = new List<string>();
        for (var h = 0; h < hours; h += 3)
        {
            xPositions.Add(h);
            xLabels.Add(timeline.HourStartsLocal[h].Substring(11, 5));
        }

        plot.Axes.Left.SetTicks(yPositions, yLabels);
        plot.Axes.Bottom.SetTicks([.. xPositions], [.. xLabels]);
        plot.Axes.SetLimits(0, hours, 0, Math.Max(1, rows.Count));
        if (rows.Count == 0)
        {
            plot.Add.Text("no contamination recorded", hours / 2.0, 0.5);
        }

        plot.Title($"{data.Stream} {data.Day}: affected minutes per source and hour (blank: none)");
        plot.XLabel("local time");
        return plot;
    }

    private static double DaySummarizerRound(double value) => Math.Round(value, 3, MidpointRounding.AwayFromZero);

    private static double RoundSignificant(double value, int digits)
    {
        if (value == 0 || !double.IsFinite(value))
        {
            return double.IsFinite(value) ? value : 0;
        }

        var scale = Math.Pow(10, digits - 1 - (int)Math.Floor(Math.Log10(Math.Abs(value))));
        return Math.Round(value * scale) / scale;
    }

    /// <summary>The timeline's colour scale as a colour axis, so ScottPlot can draw its key: Viridis over 0–60 minutes.</summary>
    private sealed class MinutesKey : IHasColorAxis
    {
        public IColormap Colormap { get; } = new ScottPlot.Colormaps.Viridis();

        public ScottPlot.Range GetRange() => new(0, TimelineKeyMaxMinutes);
    }
}
