using System.Globalization;
using System.Text;

namespace HumWatch.SoakHarness;

/// <summary>The run's curve as a small self-contained SVG: working set above, handles, sockets and threads below.</summary>
internal static class SoakCurve
{
    private const int Width = 760;
    private const int PanelHeight = 170;
    private const int Left = 64;
    private const int Right = 24;
    private const int Top = 28;
    private const int Gap = 46;

    public static string Svg(IReadOnlyList<ProcessSample> samples, double warmUpMinutes, string title)
    {
        var minutes = samples.Select(s => s.WallSeconds / 60).ToArray();
        var span = Math.Max(minutes.DefaultIfEmpty(1).Max(), 1);
        var svg = new StringBuilder();
        var height = Top + (2 * PanelHeight) + Gap + 40;
        svg.AppendLine(CultureInfo.InvariantCulture, $"<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{Width}\" height=\"{height}\" viewBox=\"0 0 {Width} {height}\" font-family=\"sans-serif\" font-size=\"12\">");
        svg.AppendLine(CultureInfo.InvariantCulture, $"<rect width=\"{Width}\" height=\"{height}\" fill=\"white\"/><text x=\"{Left}\" y=\"18\" font-size=\"14\">{Escape(title)}</text>");
        Panel(svg, Top, "working set, MiB", span, warmUpMinutes, minutes, [("working set", "#0b5fa5", samples.Select(s => s.WorkingSetMiB).ToArray())]);
        Panel(svg, Top + PanelHeight + Gap, "count", span, warmUpMinutes, minutes,
        [
            ("handles", "#c15a00", samples.Select(s => (double)s.Handles).ToArray()),
            ("threads", "#2a8c55", samples.Select(s => (double)s.Threads).ToArray()),
            ("sockets", "#7b3fa0", samples.Select(s => (double)s.Sockets).ToArray()),
        ]);
        svg.AppendLine(CultureInfo.InvariantCulture, $"<text x=\"{Left + ((Width - Left - Right) / 2)}\" y=\"{height - 8}\" text-anchor=\"middle\">wall time, minutes</text>");
        svg.AppendLine("</svg>");
        return svg.ToString();
    }

    private static void Panel(StringBuilder svg, int top, string axis, double spanMinutes, double warmUpMinutes, double[] minutes, (string Name, string Colour, double[] Values)[] series)
    {
        var plotWidth = Width - Left - Right;
        var max = series.SelectMany(s => s.Values).DefaultIfEmpty(1).Max() * 1.15;
        max = max <= 0 ? 1 : max;
        double X(double minute) => Left + (minute / spanMinutes * plotWidth);
        double Y(double value) => top + PanelHeight - (value / max * PanelHeight);
        svg.AppendLine(CultureInfo.InvariantCulture, $"<rect x=\"{Left}\" y=\"{top}\" width=\"{plotWidth}\" height=\"{PanelHeight}\" fill=\"none\" stroke=\"#888\"/>");
        for (var i = 0; i <= 4; i++)
        {
            var value = max * i / 4;
            svg.AppendLine(CultureInfo.InvariantCulture, $"<text x=\"{Left - 6}\" y=\"{Y(value) + 4:0.0}\" text-anchor=\"end\">{value:0}</text>");
            svg.AppendLine(CultureInfo.InvariantCulture, $"<text x=\"{X(spanMinutes * i / 4):0.0}\" y=\"{top + PanelHeight + 15}\" text-anchor=\"middle\">{spanMinutes * i / 4:0}</text>");
        }

        svg.AppendLine(CultureInfo.InvariantCulture, $"<text transform=\"translate(14 {top + (PanelHeight / 2)}) rotate(-90)\" text-anchor=\"middle\">{Escape(axis)}</text>");
        if (warmUpMinutes > 0 && warmUpMinutes < spanMinutes)
        {
            svg.AppendLine(CultureInfo.InvariantCulture, $"<line x1=\"{X(warmUpMinutes):0.0}\" y1=\"{top}\" x2=\"{X(warmUpMinutes):0.0}\" y2=\"{top + PanelHeight}\" stroke=\"#555\" stroke-dasharray=\"4 4\"/><text x=\"{X(warmUpMinutes) + 4:0.0}\" y=\"{top + 14}\">end of warm-up</text>");
        }

        var legendX = Left + plotWidth - 10;
        foreach (var (name, colour, values) in series)
        {
            var points = string.Join(" ", values.Select((v, i) => string.Create(CultureInfo.InvariantCulture, $"{X(minutes[i]):0.0},{Y(v):0.0}")));
            svg.AppendLine(CultureInfo.InvariantCulture, $"<polyline fill=\"none\" stroke=\"{colour}\" stroke-width=\"2\" points=\"{points}\"/>");
            svg.AppendLine(CultureInfo.InvariantCulture, $"<text x=\"{legendX}\" y=\"{top + PanelHeight - 8}\" text-anchor=\"end\" fill=\"{colour}\">{Escape(name)}</text>");
            legendX -= 80;
        }
    }

    private static string Escape(string text) => text.Replace("&", "&amp;", StringComparison.Ordinal).Replace("<", "&lt;", StringComparison.Ordinal);
}
