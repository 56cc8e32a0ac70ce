using System.Globalization;
using System.Text;

namespace HumWatch.Formats.Csv;

/// <summary>Fields of a delimited text recording: separators, numbers (with decimal commas after semicolons), quoted names and unit suffixes.</summary>
internal static class CsvText
{
    public static StreamReader OpenText(string path) =>
        new(new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete, 1 << 16, FileOptions.SequentialScan), Encoding.UTF8, detectEncodingFromByteOrderMarks: true);

    public static int Decimals(ReadOnlySpan<char> field)
    {
        var dot = field.IndexOfAny('.', ',');
        if (dot < 0)
        {
            return 0;
        }

        var e = field.IndexOfAny('e', 'E');
        var end = e < 0 ? field.Trim().Length : e;
        return Math.Max(0, end - dot - 1);
    }

    public static char DetectSeparator(string path, string header, int lineNumber)
    {
        var commas = header.Count(ch => ch == ',');
        var semicolons = header.Count(ch => ch == ';');
        var tabs = header.Count(ch => ch == '\t');
        var kinds = (commas > 0 ? 1 : 0) + (semicolons > 0 ? 1 : 0) + (tabs > 0 ? 1 : 0);
        if (kinds > 1)
        {
            throw new RecordingFormatException(path, $"line {lineNumber}: header mixes separators ({commas} commas, {semicolons} semicolons, {tabs} tabs); use one of them");
        }

        return semicolons > 0 ? ';' : tabs > 0 ? '\t' : ',';
    }

    public static double ParseNumber(string path, ReadOnlySpan<char> field, int lineNumber, int column, string columnName, char separator)
    {
        if (TryParseNumber(field, separator, out var value))
        {
            return value;
        }

        throw new RecordingFormatException(path, $"line {lineNumber}, column {column} ('{columnName}'): '{Shown(field)}' is not a number");
    }

    public static bool TryParseNumber(ReadOnlySpan<char> field, char separator, out double value)
    {
        var text = field.Trim();
        if (text.Length >= 2 && text[0] == '"' && text[^1] == '"')
        {
            text = text[1..^1].Trim();
        }

        if (double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out value) && !double.IsInfinity(value))
        {
            return true;
        }

        // Semicolon-separated files often come with decimal commas.
        if (separator == ';' && text.Contains(','))
        {
            Span<char> copy = stackalloc char[Math.Min(text.Length, 128)];
            if (text.Length <= copy.Length)
            {
                text.CopyTo(copy);
                copy.Replace(',', '.');
                if (double.TryParse(copy, NumberStyles.Float, CultureInfo.InvariantCulture, out value) && !double.IsInfinity(value))
                {
                    return true;
                }
            }
        }

        value = double.NaN;
        return false;
    }

    public static string Shown(ReadOnlySpan<char> field)
    {
        var text = field.Trim();
        return text.Length > 40 ? string.Concat(text[..40], "…") : text.ToString();
    }

    public static string Unquote(string name)
    {
        var t = name.Trim();
        return t.Length >= 2 && t[0] == '"' && t[^1] == '"' ? t[1..^1].Trim() : t;
    }

    /// <summary>"Cz (mV)" → ("Cz", "mV"); "Fp1 [uV]" → ("Fp1", "uV"); "O1" → ("O1", null).</summary>
    public static (string Name, string? Unit) SplitUnit(string header)
    {
        var t = header.Trim();
        if (t.Length > 2 && (t[^1] == ']' || t[^1] == ')'))
        {
            var open = t.LastIndexOf(t[^1] == ']' ? '[' : '(');
            if (open > 0)
            {
                return (t[..open].Trim(), t[(open + 1)..^1].Trim());
            }
        }

        return (t, null);
    }
}
