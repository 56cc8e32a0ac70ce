using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;

namespace HumWatch.Core.Reporting;

/// <summary>One episode of one line over a recording (or one rate group of it).</summary>
/// <param name="FrequencyHz">Median of the frames' frequencies.</param>
/// <param name="Source">Most likely explanation (identical over the episode).</param>
/// <param name="AlsoPossible">Other explanations seen for this line, e.g. "display 75 Hz h2".</param>
/// <param name="AmplitudeUvRms">Median over the frames that show the line of the frame's median channel amplitude.</param>
/// <param name="MaxAmplitudeUvRms">Largest channel amplitude seen.</param>
/// <param name="ProminenceDb">Largest prominence over the local floor.</param>
/// <param name="ChannelShare">Median share of analysed channels carrying the line.</param>
/// <param name="WorstChannels">Labels of the channels that carried it most strongly.</param>
/// <param name="FirstSeconds">Start of the evidence, seconds from the recording's start.</param>
/// <param name="LastSeconds">End of the evidence.</param>
/// <param name="PresentSeconds">Time covered by frames that show it (hop-weighted).</param>
/// <param name="FalseAlarmProbability">
/// Median over the frames that show the line of the frame's false-alarm probability (<see cref="Lines.FrameLine.FalseAlarmProbability"/>):
/// a typical frame's chance that noise alone would produce it. The median rather than the best frame, because the
/// smallest of many frames' probabilities is itself a selection; for a line that persists it is conservative
/// (every frame adds evidence the median does not count). NaN when no frame had one.
/// </param>
public sealed record LineFinding(
    double FrequencyHz,
    SourceMatch Source,
    IReadOnlyList<string> AlsoPossible,
    double AmplitudeUvRms,
    double MaxAmplitudeUvRms,
    double ProminenceDb,
    double ChannelShare,
    int AffectedChannelCount,
    IReadOnlyList<string> WorstChannels,
    double FirstSeconds,
    double LastSeconds,
    double PresentSeconds,
    double FalseAlarmProbability = double.NaN)
{
    /// <summary>What decided the explanation (the tracker's evidence in the episode's last frame).</summary>
    public Tracking.LineEvidence Evidence { get; init; } = Tracking.LineEvidence.None;

    /// <summary>Short human name of the explanation, e.g. "mains h3" or "display 75 Hz h2 (aliased)": the harmonic spelled as in keys and labels, the fundamental without.</summary>
    public string SourceLabel => Describe(Source);

    public static string Describe(SourceMatch match)
    {
        if (!match.IsIdentified)
        {
            return "unidentified";
        }

        var harmonic = match.Harmonic == 1 ? "" : $" h{match.Harmonic}";
        var aliased = match.Aliased ? " (aliased)" : "";
        return $"{match.Name}{harmonic}{aliased}";
    }
}

/// <summary>The grid a stream's lines were attributed against.</summary>
/// <param name="NominalHz">50 or 60 Hz (or the configured value); null when neither configured nor seen.</param>
/// <param name="From">Configured, measured from the data, or unknown.</param>
/// <param name="ConflictHz">The other grid, when the data contradicts the configured one; else null.</param>
public sealed record GridFinding(double? NominalHz, Tracking.GridOrigin From, double? ConflictHz)
{
    public static GridFinding Unknown { get; } = new(null, Tracking.GridOrigin.Unknown, null);
}

/// <summary>One episode of a channel fault.</summary>
public sealed record FaultFinding(int Channel, string ChannelLabel, ChannelFaultKind Kind, double FirstSeconds, double LastSeconds);

/// <summary>Everything found in one analysed stream (a recording's rate group, or a whole stream).</summary>
/// <param name="TransientPeakCount">Peaks never seen in enough consecutive frames to count as lines.</param>
public sealed record RecordingFindings(
    double SampleRateHz,
    int ChannelCount,
    double AnalysedSeconds,
    int FrameCount,
    double? MedianMainsHz,
    IReadOnlyList<LineFinding> Lines,
    IReadOnlyList<FaultFinding> Faults,
    int TransientPeakCount = 0)
{
    /// <summary>The grid the lines were attributed against.</summary>
    public GridFinding Grid { get; init; } = GridFinding.Unknown;

    /// <summary>Applies the limits: fail beats warn beats pass.</summary>
    public Verdict Judge(CheckLimits limits, double recordingSeconds) => Decide(limits, recordingSeconds).Verdict;

    /// <summary>Applies the limits and says what decided: the first line or fault (strongest first) at the verdict's level.</summary>
    public VerdictDecision Decide(CheckLimits limits, double recordingSeconds)
    {
        ArgumentNullException.ThrowIfNull(limits);
        var decision = VerdictDecision.Pass;
        foreach (var line in Lines)
        {
            if (line.PresentSeconds < limits.MinLineSeconds || (!limits.CountUnidentifiedLines && !line.Source.IsIdentified))
            {
                continue;
            }

            if (line.AmplitudeUvRms >= limits.FailLineUvRms)
            {
                return new VerdictDecision(Verdict.Fail, line, null, 0);
            }

            if (line.AmplitudeUvRms >= limits.WarnLineUvRms && decision.Verdict == Verdict.Pass)
            {
                decision = new VerdictDecision(Verdict.Warn, line, null, 0);
            }
        }

        // A channel's episodes of one fault kind add up: a channel flat for many short stretches is as bad as one long one.
        var faultSeconds = new Dictionary<(int Channel, ChannelFaultKind Kind), double>();
        foreach (var fault in Faults)
        {
            faultSeconds[(fault.Channel, fault.Kind)] = faultSeconds.GetValueOrDefault((fault.Channel, fault.Kind)) + (fault.LastSeconds - fault.FirstSeconds);
        }

        foreach (var ((channel, kind), seconds) in faultSeconds)
        {
            var fraction = recordingSeconds > 0 ? seconds / recordingSeconds : 1;
            var fault = Faults.First(f => f.Channel == channel && f.Kind == kind);
            if (fraction >= limits.FailFaultFraction)
            {
                return new VerdictDecision(Verdict.Fail, null, fault, fraction);
            }

            if (decision.Verdict == Verdict.Pass)
            {
                decision = new VerdictDecision(Verdict.Warn, null, fault, fraction);
            }
        }

        return decision;
    }
}

/// <summary>A verdict and what decided it: a line over a limit, or a channel fault and the share of the recording it covers.</summary>
public sealed record VerdictDecision(Verdict Verdict, LineFinding? Line, FaultFinding? Fault, double FaultFraction)
{
    public static VerdictDecision Pass { get; } = new(Verdict.Pass, null, null, 0);
}
