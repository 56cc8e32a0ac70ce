using System.Globalization;
using HumWatch.Core.Summaries;
using ScottPlot;

namespace HumWatch.Host.Summaries;

/// <summary>The mains plot: the fundamental per minute on the monitored hours, with the whole day as a strip above.</summary>
internal static partial class SummaryPlots
{
    /// <summary>
    /// The hours the mains plot shows: from the first to the last monitored hour (whole hours, at least one), so a
    /// short recording fills the plot; without a monitored range, the span of the track, else the whole day.
    /// </summary>
    private static (int From, int To) ShownHours(MainsTrack track, int hoursInDay, (int First, int Last)? monitoredMinutes)
    {
        double? firstSeconds = null;
        double? lastSeconds = null;
        if (monitoredMinutes is { } m)
        {
            firstSeconds = m.First * 60.0;
            lastSeconds = (m.Last + 1) * 60.0;
        }
        else
        {
            for (var i = 0; i < track.Hz.Count; i++)
            {
                if (track.Hz[i] is not null)
                {
                    firstSeconds ??= i * (double)track.StepSeconds;
                    lastSeconds = (i + 1) * (double)track.StepSeconds;
                }
            }
        }

        if (firstSeconds is not { } first || lastSeconds is not { } last || hoursInDay <= 0)
        {
            return (0, Math.Max(1, hoursInDay));
        }

        var from = Math.Clamp((int)Math.Floor(first / 3600), 0, hoursInDay - 1);
        var to = Math.Clamp((int)Math.Ceiling(last / 3600), from + 1, hoursInDay);
        return (from, to);
    }

    private static Plot DrawMains(PlotData data, MainsPlot mains)
    {
        var plot = new Plot();
        var hourStarts = data.Timeline.HourStartsLocal;
        var stepHours = mains.StepSeconds / 3600.0;
        var dayHours = Math.Max(1, hourStarts.Count);
        var from = Math.Clamp(mains.FromHour, 0, dayHours - 1);
        var to = Math.Clamp(mains.ToHour, from + 1, dayHours);

        // The track as a line where its values are consecutive steps; a lone value as a dot.
        var runXs = new List<double>();
        var runYs = new List<double>();
        for (var i = 0; i <= mains.Hz.Count; i++)
        {
            if (i < mains.Hz.Count && mains.Hz[i] is { } hz)
            {
                runXs.Add(i * stepHours);
                runYs.Add(hz);
                continue;
            }

            AddRun(plot, runXs, runYs);
            runXs.Clear();
            runYs.Clear();
        }

        // Without a measured fundamental the axis still spans the grid's EN 50160 ±1 % window, so the note sits at
        // the grid the site uses (60 Hz on a 60 Hz site), not at a fixed 50 Hz.
        double? low = null;
        double? high = null;
        if (mains.MeanHz is { } mean)
        {
            // The title states the mean; a label on the line itself would print over the frequency ticks.
            plot.Add.HorizontalLine(mean, 1, Colors.Gray, LinePattern.Dashed);
        }
        else if (mains.GridHz is { } grid)
        {
            var note = plot.Add.Text(string.Create(CultureInfo.InvariantCulture, $"{FundamentalNotSeen} (grid {grid:0.##} Hz)"), (from + to) / 2.0, grid);
            note.LabelAlignment = Alignment.MiddleCenter;
            low = grid * 0.99;
            high = grid * 1.01;
        }
        else
        {
            // No grid set or seen: a frequency axis would mean nothing, so the note stands alone.
            var note = plot.Add.Text($"{FundamentalNotSeen} (grid neither set nor seen)", (from + to) / 2.0, 0.5);
            note.LabelAlignment = Alignment.MiddleCenter;
            low = 0;
            high = 1;
            plot.Axes.Left.TickGenerator = new ScottPlot.TickGenerators.NumericManual();
        }

        var c = CultureInfo.InvariantCulture;
        var shown = from == 0 && to == dayHours ? "" : $" {ClockText(hourStarts, from)}–{ClockText(hourStarts, to)} of the {dayHours} h day (strip above)";
        plot.Title(mains.MeanHz is { } m
            ? string.Create(c, $"{data.Stream} {data.Day}: mains frequency{shown}; mean {m:0.000} Hz (dashed), range {mains.MinHz:0.000}–{mains.MaxHz:0.000} Hz")
            : $"{data.Stream} {data.Day}: mains frequency{shown}");
        plot.Axes.Title.Label.FontSize = 14;
        plot.XLabel("local time");
        plot.YLabel("mains frequency, Hz");
        plot.Axes.Bottom.SetTicks(TimeTicks(hourStarts, from, to, out var labels), labels);
        plot.Axes.SetLimitsX(from, to);
        if (low is { } lo && high is { } hi)
        {
            plot.Axes.SetLimitsY(lo, hi);
        }

        if (from > 0 || to < dayHours)
        {
            AddDayStrip(plot, hourStarts, from, to);
        }

        return plot;
    }

    private static void AddRun(Plot plot, List<double> xs, List<double> ys)
    {
        if (xs.Count == 0)
        {
            return;
        }

        var scatter = plot.Add.Scatter(xs.ToArray(), ys.ToArray(), TrackColor);
        scatter.LineWidth = xs.Count > 1 ? 1.5f : 0;
        scatter.MarkerSize = xs.Count > 1 ? 0 : 4;
    }

    /// <summary>
    /// The day's extent above the fitted plot: a faint band for the whole local day on the top axis (its own hour
    /// scale), a darker one for the hours shown below, so a short recording still reads as a part of its day.
    /// </summary>
    private static void AddDayStrip(Plot plot, IReadOnlyList<string> hourStarts, int from, int to)
    {
        var dayHours = hourStarts.Count;
        var top = plot.Axes.Top;
        var strip = plot.Axes.Right;
        var day = plot.Add.Rectangle(0, dayHours, 0.97, 1);
        day.FillColor = Colors.Gray.WithAlpha(0.15);
        day.LineWidth = 0;
        day.Axes.XAxis = top;
        day.Axes.YAxis = strip;
        var shown = plot.Add.Rectangle(from, to, 0.97, 1);
        shown.FillColor = TrackColor.WithAlpha(0.45);
        shown.LineWidth = 0;
        shown.Axes.XAxis = top;
        shown.Axes.YAxis = strip;

        var positions = new List<double>();
        var labels = new List<string>();
        for (var h = 0; h <= dayHours; h += 6)
        {
            positions.Add(h);
            labels.Add(ClockText(hourStarts, h));
        }

        if (positions[^1] != dayHours)
        {
            positions.Add(dayHours);
            labels.Add(ClockText(hourStarts, dayHours));
        }

        // The title says what the strip is ("09:00–10:00 of the 24 h day"); an axis label here would print over it.
        top.SetTicks([.. positions], [.. labels]);
        top.Min = 0;
        top.Max = dayHours;
        strip.Min = 0;
        strip.Max = 1;
        strip.TickGenerator = new ScottPlot.TickGenerators.NumericManual();
    }

    /// <summary>Ticks of the fitted time axis: every 10, 15 or 30 min, or every 1, 2 or 3 h, at most about 13.</summary>
    private static double[] TimeTicks(IReadOnlyList<string> hourStarts, int from, int to, out string[] labels)
    {
        var hours = to - from;
        double[] stepsHours = [1 / 6.0, 0.25, 0.5, 1, 2, 3];
        var step = stepsHours.First(s => hours / s <= 12 || s == 3);
        var positions = new List<double>();
        var texts = new List<string>();
        var count = (int)Math.Round(hours / step);
        for (var i = 0; i <= count; i++)
        {
            var x = from + (i * step);
            positions.Add(x);
            texts.Add(ClockText(hourStarts, x));
        }

        labels = [.. texts];
        return [.. positions];
    }

    /// <summary>Local clock time of a position in hours since local midnight, from the day's hour starts; the day's end reads 24:00.</summary>
    private static string ClockText(IReadOnlyList<string> hourStarts, double hoursSinceMidnight)
    {
        // Whole minutes first, so that 10 steps of 1/6 h never read "09:60".
        var totalMinutes = (int)Math.Round(hoursSinceMidnight * 60);
        var hour = totalMinutes / 60;
        var minutes = totalMinutes % 60;
        if (hour >= hourStarts.Count)
        {
            return "24:00";
        }

        var clock = hourStarts[hour].AsSpan(11, 5);
        var localHour = int.Parse(clock[..2], CultureInfo.InvariantCulture);
        return string.Create(CultureInfo.InvariantCulture, $"{localHour:00}:{minutes:00}");
    }
}
