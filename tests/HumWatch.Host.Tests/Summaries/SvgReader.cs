using System.Globalization;
using System.Text.RegularExpressions;
using System.Xml.Linq;

namespace HumWatch.Host.Tests.Summaries;

/// <summary>The texts and stroked paths of a ScottPlot SVG, with their positions in pixels.</summary>
internal sealed partial class SvgReader
{
    private SvgReader(IReadOnlyList<SvgText> texts, IReadOnlyList<SvgPath> paths, IReadOnlyList<SvgDot> dots)
    {
        Texts = texts;
        Paths = paths;
        Dots = dots;
    }

    public IReadOnlyList<SvgText> Texts { get; }

    public IReadOnlyList<SvgPath> Paths { get; }

    /// <summary>Markers (ellipses) with their fill colour and centre, px.</summary>
    public IReadOnlyList<SvgDot> Dots { get; }

    /// <summary>Rectangles with their fill, left edge and width, px.</summary>
    public IReadOnlyList<SvgRect> Rects { get; private init; } = [];

    public static SvgReader Parse(string svg)
    {
        var doc = XDocument.Parse(svg);
        XNamespace ns = "http://www.w3.org/2000/svg";
        var texts = new List<SvgText>();
        foreach (var t in doc.Descendants(ns + "text"))
        {
            // ScottPlot (through Skia's SVG canvas) places each text by a translate(x y) to its anchor point, or by a
            // matrix(a b c d x y) when it is rotated.
            var transform = (string?)t.Attribute("transform") ?? "";
            var match = Translate().Match(transform);
            var matrix = Matrix().Match(transform);
            if (match.Success)
            {
                texts.Add(new SvgText(t.Value.Trim(), Number(match.Groups[1].Value), Number(match.Groups[2].Value)));
            }
            else if (matrix.Success)
            {
                texts.Add(new SvgText(t.Value.Trim(), Number(matrix.Groups[1].Value), Number(matrix.Groups[2].Value)));
            }
        }

        var paths = new List<SvgPath>();
        foreach (var p in doc.Descendants(ns + "path"))
        {
            var points = new List<(double X, double Y)>();
            foreach (Match m in Point().Matches((string?)p.Attribute("d") ?? ""))
            {
                points.Add((Number(m.Groups[2].Value), Number(m.Groups[3].Value)));
            }

            paths.Add(new SvgPath((string?)p.Attribute("stroke"), (string?)p.Attribute("fill"), (string?)p.Attribute("d") ?? "", points));
        }

        var dots = new List<SvgDot>();
        foreach (var e in doc.Descendants(ns + "ellipse"))
        {
            dots.Add(new SvgDot((string?)e.Attribute("fill"), Number((string?)e.Attribute("cx") ?? "0"), Number((string?)e.Attribute("cy") ?? "0")));
        }

        var rects = new List<SvgRect>();
        foreach (var r in doc.Descendants(ns + "rect"))
        {
            rects.Add(new SvgRect((string?)r.Attribute("fill"), Number((string?)r.Attribute("x") ?? "0"), Number((string?)r.Attribute("width") ?? "0")));
        }

        return new SvgReader(texts, paths, dots) { Rects = rects };
    }

    /// <summary>The one text that reads exactly <paramref name="content"/>.</summary>
    public SvgText Text(string content) => Texts.Single(t => t.Content == content);

    private static double Number(string text) => double.Parse(text, CultureInfo.InvariantCulture);

    [GeneratedRegex(@"translate\(([-0-9.eE]+)[ ,]+([-0-9.eE]+)\)")]
    private static partial Regex Translate();

    [GeneratedRegex(@"matrix\([-0-9.eE]+[ ,]+[-0-9.eE]+[ ,]+[-0-9.eE]+[ ,]+[-0-9.eE]+[ ,]+([-0-9.eE]+)[ ,]+([-0-9.eE]+)\)")]
    private static partial Regex Matrix();

    [GeneratedRegex(@"([ML])\s*([-0-9.eE]+)[ ,]+([-0-9.eE]+)")]
    private static partial Regex Point();
}

/// <summary>A text and its anchor, px.</summary>
internal sealed record SvgText(string Content, double X, double Y);

/// <summary>A path: stroke and fill colours and its move/line points, px.</summary>
internal sealed record SvgPath(string? Stroke, string? Fill, string D, IReadOnlyList<(double X, double Y)> Points);

/// <summary>A marker: fill colour and centre, px.</summary>
internal sealed record SvgDot(string? Fill, double X, double Y);

/// <summary>A rectangle: fill colour, left edge and width, px.</summary>
internal sealed record SvgRect(string? Fill, double X, double Width);
