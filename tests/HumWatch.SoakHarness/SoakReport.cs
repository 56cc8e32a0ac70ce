using System.Globalization;
using System.Text;

namespace HumWatch.SoakHarness;

/// <summary>What a soak run left: the samples, what was sent and what the service counted.</summary>
internal sealed record SoakOutcome(
    IReadOnlyList<ProcessSample> Samples, long ChunksSent, StatusTotals Final, long AlertMessages, int ExitCode, TimeSpan Elapsed);

/// <summary>
/// The soak's verdict. After warm-up the working set must stay flat (the median of the last five samples less than 5 %
/// above the median of the first five after warm-up), handles and sockets must not grow (the last five samples' maximum
/// not above the first five's), threads must not step up (the last five samples' minimum not above the first five's
/// maximum: the thread pool adds and retires workers all the time, so one more thread in one sample is no leak), and
/// every chunk sent must be accepted (none dropped or rejected).
/// </summary>
internal sealed class SoakReport
{
    /// <summary>Samples at each end of the post-warm-up stretch that are compared.</summary>
    private const int EndSamples = 5;

    /// <summary>Allowed growth of the working set after warm-up (the target: under 5 %).</summary>
    private const double MaxGrowth = 0.05;

    private readonly List<string> _failures = [];
    private readonly List<string> _figures = [];

    private SoakReport()
    {
    }

    public bool Passed => _failures.Count == 0;

    public static SoakReport Check(SoakOptions options, SoakOutcome outcome)
    {
        var report = new SoakReport();
        var post = outcome.Samples.Where(s => s.WallSeconds >= options.WarmUpMinutes * 60).ToList();
        report.Figure("wall time", $"{outcome.Elapsed.TotalMinutes:0.0} min ({outcome.Samples.Count} samples every {options.SampleSeconds:0} s; warm-up {options.WarmUpMinutes:0} min)");
        report.Figure("load", $"{options.Rooms} rooms × {options.Channels} ch × {options.SampleRateHz} Hz at speed {options.Speed:0.##} ({options.Minutes * 60 * options.Speed / 3600:0.##} h of stream time per room)");
        if (post.Count < 2 * EndSamples)
        {
            report._failures.Add($"only {post.Count} samples after warm-up; {2 * EndSamples} needed — run longer or sample more often");
        }
        else
        {
            var first = post.Take(EndSamples).ToList();
            var last = post.TakeLast(EndSamples).ToList();
            var baseline = Median(first.Select(s => s.WorkingSetMiB));
            var end = Median(last.Select(s => s.WorkingSetMiB));
            var growth = (end / baseline) - 1;
            report.Figure("working set after warm-up", $"{baseline:0.0} MiB → {end:0.0} MiB ({growth * 100:+0.0;-0.0} %); range over the whole run {outcome.Samples.Min(s => s.WorkingSetMiB):0.0}–{outcome.Samples.Max(s => s.WorkingSetMiB):0.0} MiB");
            if (growth >= MaxGrowth)
            {
                report._failures.Add($"working set grew {growth * 100:0.0} % after warm-up (limit {MaxGrowth * 100:0} %)");
            }

            report.NoGrowth("handles", first.Max(s => s.Handles), last.Max(s => s.Handles), post.Min(s => s.Handles), post.Max(s => s.Handles));
            report.NoGrowth("sockets", first.Max(s => s.Sockets), last.Max(s => s.Sockets), post.Min(s => s.Sockets), post.Max(s => s.Sockets));
            report.NoGrowth("threads", first.Max(s => s.Threads), last.Min(s => s.Threads), post.Min(s => s.Threads), post.Max(s => s.Threads));
        }

        var final = outcome.Final;
        report.Figure("chunks", $"{outcome.ChunksSent} sent, {final.ChunksAccepted} accepted, {final.ChunksDropped} dropped, {final.ChunksRejected} rejected ({final.Streams} streams reporting)");
        report.Figure("largest analysis lag seen", $"{outcome.Samples.Select(s => s.Status.MaxLagSeconds).DefaultIfEmpty(0).Max():0.00} s");
        report.Figure("alert and clear messages", outcome.AlertMessages.ToString(CultureInfo.InvariantCulture));
        report.Figure("exit code of the orderly stop", outcome.ExitCode.ToString(CultureInfo.InvariantCulture));
        if (final.ChunksDropped > 0 || final.ChunksRejected > 0 || final.ChunksAccepted != outcome.ChunksSent)
        {
            report._failures.Add($"chunks lost: {outcome.ChunksSent} sent, {final.ChunksAccepted} accepted, {final.ChunksDropped} dropped, {final.ChunksRejected} rejected");
        }

        if (final.Streams != options.Rooms)
        {
            report._failures.Add($"{final.Streams} of {options.Rooms} streams sent status messages");
        }

        if (outcome.ExitCode != 0)
        {
            report._failures.Add($"humwatch run stopped with exit code {outcome.ExitCode}");
        }

        return report;
    }

    public override string ToString()
    {
        var text = new StringBuilder();
        text.AppendLine(CultureInfo.InvariantCulture, $"soak: {(Passed ? "PASSED" : "FAILED")}");
        foreach (var figure in _figures)
        {
            text.AppendLine(figure);
        }

        foreach (var failure in _failures)
        {
            text.AppendLine(CultureInfo.InvariantCulture, $"FAIL: {failure}");
        }

        return text.ToString();
    }

    private void Figure(string name, string value) => _figures.Add($"| {name} | {value} |");

    /// <param name="firstMax">The largest of the first samples after warm-up.</param>
    /// <param name="last">What the last samples give (their largest, or for threads their smallest).</param>
    private void NoGrowth(string what, int firstMax, int last, int min, int max)
    {
        Figure(what, $"{firstMax} at the start of the flat stretch, {last} at its end (range {min}–{max})");
        if (last > firstMax)
        {
            _failures.Add($"{what} grew after warm-up: {firstMax} → {last}");
        }
    }

    private static double Median(IEnumerable<double> values)
    {
        var sorted = values.Order().ToArray();
        var mid = sorted.Length / 2;
        return sorted.Length % 2 == 1 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
    }
}
