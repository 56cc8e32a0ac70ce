using System.Globalization;
using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Reporting;
using HumWatch.Core.Spectra;
using HumWatch.Core.Tracking;
using HumWatch.Formats;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Serialization;

namespace HumWatch.Host.Checking;

/// <summary>
/// Runs one recording file through the analysis, group by group, and builds its report. Shared by the `check`
/// command and the folder inbox (whose stream sessions take the frames and hand them on to the report).
/// </summary>
public sealed class RecordingChecker
{
    private readonly AnalysisOptions _analysis;
    private readonly CheckLimits _limits;
    private readonly int _threads;

    /// <param name="threads">Threads for one file (≥ 1): the `check` command uses every core for its one file, splitting a
    /// gap-free EDF/BDF in time (<see cref="BlockedAnalysis"/>) or else each group's spectra over channels; the service's
    /// inbox keeps one, since streams already run in parallel.</param>
    public RecordingChecker(AnalysisOptions analysis, CheckLimits limits, int threads = 1)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(threads, 1);
        _threads = threads;
        ArgumentNullException.ThrowIfNull(analysis);
        ArgumentNullException.ThrowIfNull(limits);
        var errors = analysis.Validate("Analysis").Concat(limits.Validate("Check")).ToList();
        if (errors.Count > 0)
        {
            throw new ArgumentException(string.Join(Environment.NewLine, errors), nameof(analysis));
        }

        _analysis = analysis;
        _limits = limits;
    }

    /// <summary>
    /// Checks one file. Unreadable input becomes an "error" report rather than an exception, so a batch goes on.
    /// </summary>
    /// <param name="path">The recording.</param>
    /// <param name="progress">Receives the share of the recording read so far, 0..1.</param>
    public CheckReport Check(string path, IProgress<double>? progress = null, CancellationToken cancellationToken = default) =>
        Check(path, progress, sessionFor: null, cancellationToken);

    /// <summary>Checks one file, each signal group's frames going through a stream session (the folder inbox).</summary>
    /// <param name="sessionFor">Per signal group, the session that takes its frames, given the group's report
    /// accumulator to hand them on to (<see cref="StreamSessionFactory.CreateForFileGroup"/>); null: the report takes them directly.</param>
    internal CheckReport Check(
        string path,
        IProgress<double>? progress,
        Func<SignalGroup, RecordingAccumulator, StreamSession>? sessionFor,
        CancellationToken cancellationToken)
    {
        ArgumentException.ThrowIfNullOrEmpty(path);
        try
        {
            return CheckReadable(path, progress, sessionFor, cancellationToken);
        }
        catch (RecordingFormatException ex)
        {
            return ErrorReport(path, ex.Message);
        }
        catch (IOException ex)
        {
            return ErrorReport(path, $"{path}: {ex.Message}");
        }
        catch (UnauthorizedAccessException ex)
        {
            return ErrorReport(path, $"{path}: {ex.Message}");
        }
    }

    private static CheckReport ErrorReport(string path, string message) =>
        new() { File = path, Verdict = Verdict.Error, Error = message };

    private CheckReport CheckReadable(
        string path,
        IProgress<double>? progress,
        Func<SignalGroup, RecordingAccumulator, StreamSession>? sessionFor,
        CancellationToken cancellationToken)
    {
        using var reader = RecordingReader.Open(path);
        var info = reader.Info;
        var notes = new List<string>();
        if (info.Groups.Count == 0)
        {
            return new CheckReport
            {
                File = path,
                Verdict = Verdict.Error,
                Error = $"{path}: no EEG signal to analyse (every signal was skipped).",
                Format = info.Format,
                DurationSeconds = Reported.ClockSeconds(info.DurationSeconds),
                SkippedSignals = Skipped(info),
            };
        }

        var hop = _analysis.Spectra.HopSeconds;
        var groups = info.Groups;
        var accumulators = new RecordingAccumulator[groups.Count];
        var sinks = new IAnalysisFrameSink[groups.Count];
        for (var g = 0; g < groups.Count; g++)
        {
            // A line absent for a whole span is a new episode; a single missed frame is not.
            accumulators[g] = new RecordingAccumulator(hop, _analysis.Spectra.SpanSeconds);

            // A session is the one fan-out point of the group's frames (report first) and tracks the lines in front of
            // it; without one, the report is the only consumer and gets its own tracker.
            sinks[g] = sessionFor is null ? new LineTracker(_analysis, accumulators[g]) : sessionFor(groups[g], accumulators[g]);
        }

        // One long file on several cores: split it in time when the format allows, else spread each group's spectra.
        var blocked = BlockedAnalysis.TryPlan(path, reader, _analysis, _threads);
        var gapCounts = blocked is null
            ? AnalyseInOnePass(reader, sinks, progress, cancellationToken)
            : AnalyseInBlocks(blocked, sinks, progress, cancellationToken);

        var lines = new List<CheckLine>();
        var faults = new List<CheckFault>();
        var verdict = Verdict.Pass;
        string? verdictReason = null;
        var mainsEstimates = new List<double>();
        GridFinding? grid = null;
        for (var g = 0; g < groups.Count; g++)
        {
            var layout = groups[g].Layout;
            var findings = accumulators[g].Complete(layout);
            if (gapCounts[g] > 0)
            {
                notes.Add($"{gapCounts[g]} gap(s) in the {layout.SampleRateHz:0.###} Hz signals; analysis restarted after each.");
            }

            if (findings.FrameCount == 0)
            {
                notes.Add($"The {layout.SampleRateHz:0.###} Hz signals are shorter than one analysis span ({_analysis.Spectra.SpanSeconds:0.##} s): nothing was analysed.");
                verdictReason ??= string.Create(CultureInfo.InvariantCulture, $"nothing was analysed in the {layout.SampleRateHz:0.###} Hz signals (shorter than one analysis span)");
                verdict = Max(verdict, Verdict.Warn);
                continue;
            }

            if (findings.TransientPeakCount > 0)
            {
                notes.Add($"{findings.TransientPeakCount} short-lived peak(s) in the {layout.SampleRateHz:0.###} Hz signals, seen in fewer than {_analysis.Tracking.PersistFrames} frames in a row (e.g. a rhythm that looked tonal for one span), were not counted as lines.");
            }

            // The group with the most channels speaks for the recording's grid.
            if (grid is null || findings.ChannelCount > groups.Where((_, i) => i < g).Max(x => x.Layout.ChannelCount))
            {
                grid = findings.Grid;
            }

            if (findings.MedianMainsHz is { } mains)
            {
                mainsEstimates.Add(mains);
            }

            var decision = findings.Decide(_limits, info.DurationSeconds);
            if (decision.Verdict > verdict || (decision.Verdict == verdict && verdictReason is null))
            {
                verdictReason = Because(decision);
            }

            verdict = Max(verdict, decision.Verdict);
            foreach (var line in findings.Lines)
            {
                lines.Add(ToCheckLine(line, layout.SampleRateHz, findings.MedianMainsHz));
            }

            foreach (var fault in findings.Faults)
            {
                faults.Add(new CheckFault
                {
                    Channel = fault.ChannelLabel,
                    Kind = fault.Kind.ToText(),
                    FirstSeconds = Reported.Seconds(fault.FirstSeconds),
                    LastSeconds = Reported.Seconds(fault.LastSeconds),
                    SampleRateHz = layout.SampleRateHz,
                });
            }
        }

        if (info.Prefiltering is { } prefilter && prefilter.Contains("N:", StringComparison.OrdinalIgnoreCase))
        {
            // EDF+ records an applied notch as "N:50Hz": the fundamental is suppressed, harmonics may still be there.
            notes.Add($"The recording declares a notch filter ({prefilter}); a suppressed fundamental does not mean the room is clean.");
        }

        grid ??= GridFinding.Unknown;
        if (grid.ConflictHz is { } conflict && grid.NominalHz is { } configured)
        {
            notes.Add(string.Create(CultureInfo.InvariantCulture, $"The recording shows a {conflict:0.##} Hz grid (its fundamental on most channels, with harmonics) and no {configured:0.##} Hz fundamental, but the settings say {configured:0.##} Hz: check Analysis:Sources:MainsHz or --mains. Lines were attributed against {configured:0.##} Hz."));
        }

        // The first group with the most channels, in a plain loop: LINQ's ordering is compiled at run time even in the
        // precompiled program.
        var primary = groups[0].Layout;
        foreach (var group in groups)
        {
            if (group.Layout.ChannelCount > primary.ChannelCount)
            {
                primary = group.Layout;
            }
        }

        return new CheckReport
        {
            File = path,
            Verdict = verdict,
            VerdictReason = verdict == Verdict.Pass ? null : verdictReason,
            Limits = CheckReportLimits.From(_limits),
            Format = info.Format,
            SampleRateHz = primary.SampleRateHz,
            ChannelCount = groups.Sum(g => g.Layout.ChannelCount),
            DurationSeconds = Reported.ClockSeconds(info.DurationSeconds),
            MainsEstimateHz = mainsEstimates.Count == 0 ? null : Reported.Hz(mainsEstimates.Average()),
            MainsHz = grid.NominalHz,
            MainsFrom = GridOriginName(grid.From),
            Prefiltering = string.IsNullOrWhiteSpace(info.Prefiltering) ? null : info.Prefiltering,
            Lines = lines,
            ChannelFaults = faults,
            SkippedSignals = Skipped(info),
            Notes = notes,
            Caution = lines.Count > 0 || faults.Count > 0 ? SafetyNotice.Text : null,
        };
    }

    private long[] AnalyseInOnePass(IRecordingReader reader, IAnalysisFrameSink[] sinks, IProgress<double>? progress, CancellationToken cancellationToken)
    {
        var info = reader.Info;
        var analyzers = new StreamAnalyzer[info.Groups.Count];
        for (var g = 0; g < analyzers.Length; g++)
        {
            var rate = info.Groups[g].Layout.SampleRateHz;
            var kernel = ParallelPeriodogramKernel.Create(SlidingWelch.SegmentLengthFor(_analysis.Spectra, rate), rate, _threads);
            analyzers[g] = new StreamAnalyzer(info.Groups[g].Layout, _analysis, kernel);
        }

        var lastReported = 0.0;
        foreach (var item in reader.ReadChunks())
        {
            cancellationToken.ThrowIfCancellationRequested();
            analyzers[item.GroupIndex].Append(item.Chunk, sinks[item.GroupIndex]);
            if (progress is not null && info.DurationSeconds > 0)
            {
                var done = item.Chunk.EndSampleIndex / item.Chunk.Layout.SampleRateHz / info.DurationSeconds;
                if (done - lastReported >= 0.01)
                {
                    lastReported = done;
                    progress.Report(Math.Min(1, done));
                }
            }
        }

        return [.. analyzers.Select(a => a.GapCount)];
    }

    private static long[] AnalyseInBlocks(BlockedAnalysis blocked, IAnalysisFrameSink[] sinks, IProgress<double>? progress, CancellationToken cancellationToken)
    {
        blocked.Run(sinks, progress is null ? null : progress.Report, cancellationToken);

        // Only gap-free recordings are split.
        return new long[sinks.Length];
    }

    private static IReadOnlyList<CheckSkippedSignal> Skipped(RecordingInfo info) =>
        [.. info.Skipped.Select(s => new CheckSkippedSignal { Label = s.Label, Reason = s.Reason })];

    /// <param name="gridFundamentalHz">The group's measured grid fundamental (median over its frames), when seen.</param>
    internal static CheckLine ToCheckLine(LineFinding line, double sampleRateHz, double? gridFundamentalHz) => new()
    {
        FrequencyHz = Reported.Hz(line.FrequencyHz),
        Source = line.Source.Kind.ToText(),
        SourceName = line.Source.Name,
        FundamentalHz = line.Source.IsIdentified ? Reported.Hz(FundamentalOf(line.Source, gridFundamentalHz)) : null,
        Harmonic = line.Source.Harmonic,
        Aliased = line.Source.Aliased,
        AlsoPossible = line.AlsoPossible,
        AmplitudeUvRms = Reported.UvRms(line.AmplitudeUvRms),
        MaxAmplitudeUvRms = Reported.UvRms(line.MaxAmplitudeUvRms),
        ProminenceDb = Reported.Db(line.ProminenceDb),
        FalseAlarmProbability = Reported.Probability(line.FalseAlarmProbability),
        ChannelShare = Reported.Share(line.ChannelShare),
        AffectedChannels = line.AffectedChannelCount,
        WorstChannels = line.WorstChannels,
        FirstSeconds = Reported.Seconds(line.FirstSeconds),
        LastSeconds = Reported.Seconds(line.LastSeconds),
        PresentSeconds = Reported.Seconds(line.PresentSeconds),
        SampleRateHz = sampleRateHz,
        Suggestion = Suggestions.For(line.Source, line.ChannelShare, line.WorstChannels),
        Evidence = CheckEvidence.From(line),
    };

    /// <summary>"configured", "measured" or "unknown".</summary>
    public static string GridOriginName(GridOrigin origin) => origin switch
    {
        GridOrigin.Configured => "configured",
        GridOrigin.Measured => "measured",
        _ => "unknown",
    };

    private static Verdict Max(Verdict a, Verdict b) => (Verdict)Math.Max((int)a, (int)b);

    /// <summary>
    /// The fundamental of the family a line is attributed to. For mains it is the grid fundamental measured over the
    /// whole recording (the median of the frames' estimates, as mainsEstimateHz), not the estimate of the episode's last
    /// frame that the explanation carries: the grid wanders, so one frame's f̂₀ differs from the recording's by
    /// hundredths of a hertz and the fundamental line would disagree with its own fundamentalHz.
    /// </summary>
    private static double FundamentalOf(SourceMatch source, double? gridFundamentalHz) =>
        source.Kind == SourceKind.Mains && gridFundamentalHz is { } grid ? grid : source.FundamentalHz;

    /// <summary>What decided a warn or fail, with the limit it crossed and the setting that holds it.</summary>
    private string? Because(VerdictDecision decision)
    {
        var c = CultureInfo.InvariantCulture;
        var level = decision.Verdict == Verdict.Fail ? "fail" : "warn";
        if (decision.Line is { } line)
        {
            var (limit, key) = decision.Verdict == Verdict.Fail
                ? (_limits.FailLineUvRms, "Check:FailLineUvRms")
                : (_limits.WarnLineUvRms, "Check:WarnLineUvRms");
            return string.Create(c, $"{line.SourceLabel} at {line.FrequencyHz:0.00} Hz: {line.AmplitudeUvRms:0.00} µV RMS ≥ {level} limit {limit:0.00} µV RMS ({key})");
        }

        if (decision.Fault is { } fault)
        {
            var share = decision.FaultFraction * 100;
            var limit = _limits.FailFaultFraction * 100;
            return decision.Verdict == Verdict.Fail
                ? string.Create(c, $"{fault.ChannelLabel} {fault.Kind.ToText()} for {share:0.#} % of the recording ≥ fail limit {limit:0.#} % (Check:FailFaultFraction)")
                : string.Create(c, $"{fault.ChannelLabel} {fault.Kind.ToText()} for {share:0.#} % of the recording; any channel fault warns, below the fail limit {limit:0.#} % (Check:FailFaultFraction)");
        }

        return null;
    }
}
