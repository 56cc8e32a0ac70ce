using System.Globalization;
using HumWatch.Core.Summaries;
using ScottPlot;

namespace HumWatch.Host.Summaries;

/// <summary>Draws a stream's day with ScottPlot: mean spectrum (log scale, flagged lines marked), hour-by-source timeline, mains frequency.</summary>
internal static class SummaryPlots
{
    /// <summary>The plot data of a summary; the spectrum is included when stored.</summary>
    public static PlotData DataFor(DaySummary summary, DaySpectrum? spectrum, int widthPx, int heightPx)
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

        return new PlotData(
            DaySummarizer.Version,
            summary.Stream,
            summary.Day,
            widthPx,
            heightPx,
            spectrumPlot,
            new TimelinePlot(FileName(summary.Stream, "timeline"), summary.Timeline.HourStartsLocal, summary.Timeline.Rows),
            new MainsPlot(FileName(summary.Stream, "mains"), summary.DayStartUtc, summary.Mains.StepSeconds, summary.Mains.MeanHz, summary.Mains.MinHz, summary.Mains.MaxHz, summary.Mains.Hz));
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

        var ticks = new ScottPlot.TickGenerators.NumericAutomatic
        {
            MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
            IntegerTicksOnly = true,
            LabelFormatter = static y => Math.Pow(10, y).ToString("0.###E+0", CultureInfo.InvariantCulture),
        };
        plot.Axes.Left.TickGenerator = ticks;
        plot.Title($"{data.Stream} {data.Day}: mean spectrum ({spectrum.Seconds / 3600:0.#} h analysed)");
        plot.XLabel("Frequency (Hz)");
        plot.YLabel("PSD (µV²/Hz, log scale)");
        return plot;
    }

    private static Plot DrawTimeline(PlotData data, TimelinePlot timeline)
    {
        var plot = new Plot();
        var hours = timeline.HourStartsLocal.Count;
        var rows = timeline.Rows;
        var colormap = new ScottPlot.Colormaps.Viridis();
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
                rect.FillColor = colormap.GetColor(Math.Clamp(minutes / 60, 0, 1));
                rect.LineWidth = 0;
            }
        }

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

        plot.Title($"{data.Stream} {data.Day}: affected minutes per hour (blank: none; dark: a few; bright: all 60)");
        plot.XLabel("Local time");
        return plot;
    }

    private static Plot DrawMains(PlotData data, MainsPlot mains)
    {
        var plot = new Plot();
        var xs = new List<double>();
        var ys = new List<double>();
        for (var i = 0; i < mains.Hz.Count; i++)
        {
            if (mains.Hz[i] is { } hz)
            {
                xs.Add(i * mains.StepSeconds / 3600.0);
                ys.Add(hz);
            }
        }

        if (xs.Count > 0)
        {
            var scatter = plot.Add.Scatter(xs.ToArray(), ys.ToArray());
            scatter.LineWidth = 0;
            scatter.MarkerSize = 3;
        }

        if (mains.MeanHz is { } mean)
        {
            // The title states the mean; a label on the line itself would print over the frequency ticks.
            plot.Add.HorizontalLine(mean, 1, Colors.Gray, LinePattern.Dashed);
        }
        else
        {
            plot.Add.Text("mains fundamental not seen", 12, 50);
        }

        plot.Title(mains.MeanHz is { } m
            ? string.Create(CultureInfo.InvariantCulture, $"{data.Stream} {data.Day}: mains frequency (dashed: mean {m:0.000} Hz; range {mains.MinHz:0.000}–{mains.MaxHz:0.000} Hz)")
            : $"{data.Stream} {data.Day}: mains frequency");
        plot.XLabel("Hours since local midnight");
        plot.YLabel("Frequency (Hz)");
        plot.Axes.SetLimitsX(0, mains.Hz.Count / 60.0);
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
}

/// <summary>Writes a file so that a kill leaves the old file or the new one, never half of one.</summary>
internal static class AtomicFile
{
    public static void Write(string path, byte[] bytes)
    {
        var directory = Path.GetDirectoryName(Path.GetFullPath(path));
        if (!string.IsNullOrEmpty(directory))
        {
            Directory.CreateDirectory(directory);
        }

        var temp = path + ".tmp";
        File.WriteAllBytes(temp, bytes);
        File.Move(temp, path, overwrite: true);
    }
}
