using System.Globalization;
using HumWatch.Core.Reporting;
using HumWatch.Host.Checking;

namespace HumWatch.Cli.Commands;

/// <summary>The readable form of `check` reports: one block per file, the safety caution once at the end.</summary>
internal static class CheckReportText
{
    public static void Write(TextWriter output, IReadOnlyList<CheckReport> reports)
    {
        var anyHint = false;
        foreach (var report in reports)
        {
            anyHint |= WriteBlock(output, report);
        }

        WriteCaution(output, anyHint);
    }

    /// <summary>One file's block and the blank line after it; true when it gave a hint (the caution is then due).</summary>
    public static bool WriteBlock(TextWriter output, CheckReport report)
    {
        var hint = WriteOne(output, report);
        output.WriteLine();
        return hint;
    }

    /// <summary>The safety caution, once after the blocks, when any of them gave a hint.</summary>
    public static void WriteCaution(TextWriter output, bool anyHint)
    {
        if (anyHint)
        {
            output.WriteLine($"Caution: {SafetyNotice.Text}");
        }
    }

    private static bool WriteOne(TextWriter o, CheckReport r)
    {
        var c = CultureInfo.InvariantCulture;
        o.WriteLine(r.File);
        o.WriteLine($"  result    {VerdictText(r.Verdict, r.VerdictReason)}");
        if (r.Error is not null)
        {
            o.WriteLine($"  problem   {r.Error}");
            return false;
        }

        o.WriteLine(string.Create(c, $"  input     {r.ChannelCount} channels, {r.SampleRateHz:0.###} Hz, {r.DurationSeconds:0.0} s ({r.Format})"));
        o.WriteLine($"  grid      {GridText(r)}");
        if (r.Lines.Count == 0)
        {
            o.WriteLine("  lines     none found");
        }
        else
        {
            o.WriteLine("  lines");
            // µV RMS: the median over the channels that carry the line; max ch: the strongest single channel's RMS.
            o.WriteLine("    Hz         explanation                   µV RMS  max ch µV RMS  channels   strongest on         seen (s)");
            foreach (var line in r.Lines)
            {
                var what = Explain(line);
                var channels = string.Create(c, $"{line.AffectedChannels} ({line.ChannelShare * 100:0}%)");
                var strongest = string.Join(",", line.WorstChannels);
                o.WriteLine(string.Create(c, $"    {line.FrequencyHz,-10:0.00} {what,-29} {line.AmplitudeUvRms,6:0.00}  {line.MaxAmplitudeUvRms,13:0.00}  {channels,-10} {strongest,-20} {line.FirstSeconds:0}–{line.LastSeconds:0}"));
                if (line.Evidence?.Summary is { } why)
                {
                    o.WriteLine($"{"",15}why: {why}");
                }

                if (line.AlsoPossible.Count > 0 && line.Evidence?.Basis != "undecided")
                {
                    o.WriteLine($"{"",15}could also be: {string.Join("; ", line.AlsoPossible)}");
                }
            }
        }

        if (r.ChannelFaults.Count > 0)
        {
            o.WriteLine("  channel faults");
            foreach (var fault in r.ChannelFaults)
            {
                o.WriteLine(string.Create(c, $"    {fault.Channel,-12} {fault.Kind,-11} {fault.FirstSeconds:0.0}–{fault.LastSeconds:0.0} s"));
            }
        }

        // One hint per distinct suggestion, with every line it applies to.
        var hints = r.Lines
            .Where(l => l.Suggestion is not null)
            .GroupBy(l => l.Suggestion!, StringComparer.Ordinal)
            .Select(g => string.Create(c, $"{string.Join(", ", g.Select(l => l.FrequencyHz.ToString("0.00", c)))} Hz: {g.Key}"))
            .ToList();
        if (hints.Count > 0)
        {
            o.WriteLine("  what to look at");
            foreach (var hint in hints)
            {
                o.WriteLine($"    {hint}");
            }
        }

        if (r.SkippedSignals.Count > 0)
        {
            o.WriteLine($"  not analysed  {string.Join("; ", r.SkippedSignals.Select(s => $"{s.Label}: {s.Reason}"))}");
        }

        foreach (var note in r.Notes)
        {
            o.WriteLine($"  note      {note}");
        }

        return hints.Count > 0 || r.ChannelFaults.Count > 0;
    }

    private static string GridText(CheckReport r)
    {
        var c = CultureInfo.InvariantCulture;
        var measured = r.MainsEstimateHz is { } hz ? string.Create(c, $", fundamental at {hz:0.000} Hz") : "";
        return (r.MainsHz, r.MainsFrom) switch
        {
            ({ } nominal, "measured") => string.Create(c, $"{nominal:0.##} Hz, measured from the data{measured}"),
            ({ } nominal, _) => string.Create(c, $"{nominal:0.##} Hz, from the settings{measured}"),
            _ => "not seen in the data and not set (lines are named against 50 and 60 Hz alike)",
        };
    }

    private static string Explain(CheckLine line)
    {
        if (line.Source == "unidentified")
        {
            return "not in the catalogue";
        }

        var harmonic = line.Harmonic == 1 ? "" : $" h{line.Harmonic}";
        var aliased = line.Aliased ? $", aliased ({Core.Reporting.PlainWords.Aliased})" : "";
        return $"{line.SourceName}{harmonic}{aliased}";
    }

    /// <summary>The verdict, and for warn and fail what crossed which limit (the report's verdictReason).</summary>
    private static string VerdictText(Verdict verdict, string? reason) => (verdict, reason) switch
    {
        (Verdict.Pass, _) => "PASS — no contamination above the limits",
        (Verdict.Warn, { } why) => $"WARN — {why}",
        (Verdict.Warn, _) => "WARN — contamination or channel faults below the failure limits",
        (Verdict.Fail, { } why) => $"FAIL — {why}",
        (Verdict.Fail, _) => "FAIL — contamination above the limits",
        _ => "ERROR — the file could not be analysed",
    };
}
