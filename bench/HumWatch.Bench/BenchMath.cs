using System.Globalization;

namespace HumWatch.Bench;

/// <summary>Small helpers shared by the sections: medians, option parsing, load average.</summary>
internal static class BenchMath
{
    /// <summary>Median of <paramref name="values"/> (mean of the middle two for an even count); NaN when empty.</summary>
    public static double Median(IReadOnlyList<double> values)
    {
        if (values.Count == 0)
        {
            return double.NaN;
        }

        var sorted = new double[values.Count];
        for (var i = 0; i < sorted.Length; i++)
        {
            sorted[i] = values[i];
        }

        Array.Sort(sorted);
        var mid = sorted.Length / 2;
        return sorted.Length % 2 == 1 ? sorted[mid] : 0.5 * (sorted[mid - 1] + sorted[mid]);
    }

    /// <summary>The <paramref name="fraction"/> quantile of <paramref name="values"/> by nearest rank (0.95: the value 95 % of them do not exceed); NaN when empty.</summary>
    public static double Quantile(IReadOnlyList<double> values, double fraction)
    {
        if (values.Count == 0)
        {
            return double.NaN;
        }

        var sorted = values.ToArray();
        Array.Sort(sorted);
        var rank = (int)Math.Ceiling(fraction * sorted.Length);
        return sorted[Math.Clamp(rank, 1, sorted.Length) - 1];
    }

    /// <summary>
    /// Removes "--name value" from <paramref name="args"/> and returns the value; null when the option is absent. For the
    /// few options that are not integers (<see cref="ParseIntOptions"/> takes the rest).
    /// </summary>
    public static string? TakeTextOption(ref string[] args, string name)
    {
        var i = Array.IndexOf(args, name);
        if (i < 0 || i + 1 >= args.Length)
        {
            return null;
        }

        var value = args[i + 1];
        args = [.. args[..i], .. args[(i + 2)..]];
        return value;
    }

    /// <summary>The 1/5/15-minute load averages from /proc/loadavg, or "n/a".</summary>
    public static string LoadAverage()
    {
        try
        {
            var parts = File.ReadAllText("/proc/loadavg").Split(' ');
            return parts.Length >= 3 ? $"{parts[0]} {parts[1]} {parts[2]}" : "n/a";
        }
        catch (IOException)
        {
            return "n/a";
        }
    }

    /// <summary>
    /// Parses "--name value" pairs; every name must be in <paramref name="known"/>. Returns null and writes the problem
    /// to stderr (naming <paramref name="section"/>) on anything else.
    /// </summary>
    public static Dictionary<string, int>? ParseIntOptions(string section, string[] args, params (string Name, int Min, int Max)[] known)
    {
        var result = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var i = 0; i < args.Length; i += 2)
        {
            var spec = Array.Find(known, k => k.Name == args[i]);
            if (spec.Name is null || i + 1 >= args.Length)
            {
                Console.Error.WriteLine($"{section}: unknown or incomplete option '{args[i]}'. Options: {string.Join(", ", Array.ConvertAll(known, k => $"{k.Name} N ({k.Min}–{k.Max})"))}.");
                return null;
            }

            if (!int.TryParse(args[i + 1], NumberStyles.None, CultureInfo.InvariantCulture, out var value) || value < spec.Min || value > spec.Max)
            {
                Console.Error.WriteLine($"{section}: {spec.Name} must be an integer from {spec.Min} to {spec.Max} (got '{args[i + 1]}').");
                return null;
            }

            result[spec.Name] = value;
        }

        return result;
    }

    /// <summary>Formats with the invariant culture.</summary>
    public static string F(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}
