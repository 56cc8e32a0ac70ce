using System.Text.Json;
using HumWatch.Core.Analysis;
using HumWatch.Core.Reporting;
using HumWatch.Core.Signals;
using HumWatch.Core.Spectra;
using HumWatch.Core.Tracking;

namespace HumWatch.Host.Checking;

/// <summary>
/// Runs the analysis a check runs — faults, sliding Welch, line finding, tracking, the report's accumulator and its JSON —
/// over a few seconds of made-up samples, so that a one-shot check can do it on the spare core while it reads its settings.
/// </summary>
/// <remarks>
/// The published program is precompiled, but on a processor with AVX-512 the kernels' Vector512 paths are compiled at run
/// time, and every first call resolves its bindings under the runtime's locks. Done by the block workers, that happens
/// on both at once, and one waits for the other: measured, the second worker started about 40 ms after the first on a
/// 77 MB check (bench/README.md, "dataset"). Nothing here is shared with a real check but the runtime's compiled code,
/// the FFT plan cache (pure functions of the segment length) and the JSON context's metadata.
/// </remarks>
public static class CheckWarmUp
{
    // One group of 8 channels (Vector512), one of 4 (Vector256) and one channel on the scalar path: every kernel width
    // at the least work.
    private const int Channels = 13;
    private const int SampleRateHz = 1000;

    // One span (8 s) and a few hops: enough frames for the line tracker to confirm a line.
    private const int Seconds = 12;

    /// <summary>Starts <see cref="Run"/> on the thread pool; a failure there is dropped, as the check itself does the same work.</summary>
    public static Task Start() => Task.Run(() =>
    {
        try
        {
            Run();
        }
        catch (Exception)
        {
            // By design: a warm-up only saves time; the check that follows meets any real problem itself and reports it.
        }
    });

    /// <summary>Analyses <see cref="Seconds"/> s of seeded noise with a 50 Hz line and one flat channel at default settings.</summary>
    /// <returns>The number of frames analysed (for tests).</returns>
    public static int Run()
    {
        var options = new AnalysisOptions();
        var channels = new ChannelInfo[Channels];
        for (var c = 0; c < Channels; c++)
        {
            channels[c] = new ChannelInfo($"W{c + 1}");
        }

        var layout = new StreamLayout(SampleRateHz, channels);
        var kernel = PeriodogramKernels.Create(SlidingWelch.SegmentLengthFor(options.Spectra, SampleRateHz), SampleRateHz);
        var analyzer = new StreamAnalyzer(layout, options, kernel);
        var accumulator = new RecordingAccumulator(options.Spectra.HopSeconds, options.Spectra.SpanSeconds);
        var tracker = new LineTracker(options, accumulator);
        var random = new Random(20261204);
        var samples = new float[Channels * SampleRateHz];
        for (var second = 0; second < Seconds; second++)
        {
            for (var c = 0; c < Channels; c++)
            {
                for (var i = 0; i < SampleRateHz; i++)
                {
                    var t = ((second * SampleRateHz) + i) / (double)SampleRateHz;
                    samples[(c * SampleRateHz) + i] = c == Channels - 1 ? 0f : (float)((5 * Math.Sin(2 * Math.PI * 50 * t)) + (random.NextDouble() - 0.5) * 20);
                }
            }

            analyzer.Append(new SampleChunk(layout, (long)second * SampleRateHz, SampleRateHz, samples), tracker);
        }

        // The report's JSON metadata is built on first use, about 10 ms; here it is built off the critical path too.
        var findings = accumulator.Complete(layout);
        var report = new CheckReport
        {
            File = "warm-up",
            Verdict = Verdict.Warn,
            Lines = [.. findings.Lines.Select(line => RecordingChecker.ToCheckLine(line, SampleRateHz, findings.MedianMainsHz))],
        };
        _ = JsonSerializer.Serialize(report, CheckReportJsonContext.Lines.CheckReport);
        return findings.FrameCount;
    }
}
