using System.Globalization;
using System.Text;

namespace HumWatch.Formats.Edf;

/// <summary>
/// Parses the Time-stamped Annotations Lists (TALs) of an EDF+ annotation signal in one data record (EDF+ 2003 §2.2):
/// <c>+Onset[0x15 Duration]0x14 text 0x14 … 0x14 0x00</c>, repeated; unused bytes are 0.
/// </summary>
internal static class TalParser
{
    private const byte DurationMark = 0x15;
    private const byte TextEnd = 0x14;

    /// <summary>
    /// Adds the record's annotations to <paramref name="into"/> while it holds fewer than <paramref name="keepAtMost"/>
    /// (the rest are checked and counted in <paramref name="notKept"/>) and returns the onset of the first TAL (the
    /// record's start time when this is the first annotation signal), or null when the signal holds no TAL.
    /// </summary>
    /// <exception cref="FormatException">A TAL is malformed; the message says how.</exception>
    public static double? Parse(ReadOnlySpan<byte> bytes, List<RecordingAnnotation> into, int keepAtMost, ref long notKept)
    {
        double? firstOnset = null;
        var pos = 0;
        var talIndex = 0;
        while (pos < bytes.Length && bytes[pos] != 0)
        {
            if (bytes[pos] != (byte)'+' && bytes[pos] != (byte)'-')
            {
                throw new FormatException($"TAL {talIndex + 1} at byte {pos} does not start with '+' or '-'");
            }

            var onsetEnd = IndexOfAny(bytes, pos, TextEnd, DurationMark);
            if (onsetEnd < 0)
            {
                throw new FormatException($"TAL {talIndex + 1} at byte {pos} has no end of onset (0x14)");
            }

            var onset = ParseSeconds(bytes[pos..onsetEnd], allowSign: true, talIndex, "onset");
            double? duration = null;
            pos = onsetEnd + 1;
            if (bytes[onsetEnd] == DurationMark)
            {
                var durationEnd = IndexOf(bytes, pos, TextEnd);
                if (durationEnd < 0)
                {
                    throw new FormatException($"TAL {talIndex + 1} has a duration without an end mark (0x14)");
                }

                duration = ParseSeconds(bytes[pos..durationEnd], allowSign: false, talIndex, "duration");
                pos = durationEnd + 1;
            }

            firstOnset ??= onset;
            while (true)
            {
                if (pos >= bytes.Length)
                {
                    throw new FormatException($"TAL {talIndex + 1} runs past the end of the annotation signal (no closing 0x00)");
                }

                if (bytes[pos] == 0)
                {
                    pos++;
                    break;
                }

                var textEnd = IndexOf(bytes, pos, TextEnd);
                if (textEnd < 0)
                {
                    throw new FormatException($"TAL {talIndex + 1} has an annotation text without an end mark (0x14)");
                }

                // Empty texts are the record time-keeping annotation (or padding), not user annotations.
                if (textEnd > pos && into.Count >= keepAtMost)
                {
                    notKept++;
                }
                else if (textEnd > pos)
                {
                    into.Add(new RecordingAnnotation(onset, duration, Encoding.UTF8.GetString(bytes[pos..textEnd])));
                }

                pos = textEnd + 1;
            }

            talIndex++;
        }

        return firstOnset;
    }

    private static double ParseSeconds(ReadOnlySpan<byte> text, bool allowSign, int talIndex, string what)
    {
        Span<char> chars = stackalloc char[Math.Min(text.Length, 64)];
        if (text.Length == 0 || text.Length > 64)
        {
            throw new FormatException($"TAL {talIndex + 1} {what} has {text.Length} characters");
        }

        for (var i = 0; i < text.Length; i++)
        {
            var b = text[i];
            var ok = (b >= (byte)'0' && b <= (byte)'9') || b == (byte)'.' || (allowSign && i == 0 && (b == (byte)'+' || b == (byte)'-'));
            if (!ok)
            {
                throw new FormatException($"TAL {talIndex + 1} {what} '{RecordingReader.Printable(text)}' is not a number of seconds");
            }

            chars[i] = (char)b;
        }

        var style = allowSign ? NumberStyles.AllowLeadingSign | NumberStyles.AllowDecimalPoint : NumberStyles.AllowDecimalPoint;
        if (!double.TryParse(chars, style, CultureInfo.InvariantCulture, out var seconds))
        {
            throw new FormatException($"TAL {talIndex + 1} {what} '{RecordingReader.Printable(text)}' is not a number of seconds");
        }

        return seconds;
    }

    private static int IndexOf(ReadOnlySpan<byte> bytes, int from, byte value)
    {
        var i = bytes[from..].IndexOf(value);
        return i < 0 ? -1 : from + i;
    }

    private static int IndexOfAny(ReadOnlySpan<byte> bytes, int from, byte a, byte b)
    {
        var i = bytes[from..].IndexOfAny(a, b);
        return i < 0 ? -1 : from + i;
    }
}
