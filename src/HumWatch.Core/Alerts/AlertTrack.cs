using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Findings;
using HumWatch.Core.Lines;

namespace HumWatch.Core.Alerts;

/// <summary>One finding's alert state in an <see cref="AlertBook"/>: what it is, this frame's evidence, its runs and severities. Pooled and reused.</summary>
internal sealed class AlertTrack
{
    public AlertCategory Category;
    public SourceMatch Source;
    public int Channel;
    public ChannelFaultKind FaultKind;
    public double FrequencyHz;
    public bool SeenThisFrame;
    public double FrameAmplitudeUvRms;
    public double FrameFrequencyHz;
    public double FrameShare;
    public double FrameFalseAlarmProbability;
    public long FrameEvidenceStart;
    public long FrameEvidenceEnd;
    public readonly int[] FrameWorst = new int[FrameLine.MaxWorstChannels];
    public int FrameWorstCount;
    public int AboveRun;
    public int BelowRun;
    public bool Raised;
    public FindingKey Key;
    public ActiveAlert? Active;
    public double OnsetSeconds;
    public DateTimeOffset OnsetUtc;
    public double LastQualifyingEndSeconds;
    public double PeakAmplitudeUvRms;
    public AlertSeverity Severity;
    public AlertSeverity PeakSeverity;
    public AlertSeverity SeverityTarget;
    public int SeverityRun;

    public void StartLine(SourceMatch source, double frequencyHz)
    {
        Reset();
        Category = AlertCategory.Line;
        Source = source;
        FrequencyHz = frequencyHz;
    }

    public void StartFault(int channel, ChannelFaultKind kind)
    {
        Reset();
        Category = AlertCategory.ChannelFault;
        Source = SourceMatch.None;
        Channel = channel;
        FaultKind = kind;
        FrequencyHz = double.NaN;
    }

    public void BeginFrame()
    {
        SeenThisFrame = false;
        FrameEvidenceStart = 0;
        FrameEvidenceEnd = 0;
        FrameAmplitudeUvRms = double.NaN;
        FrameFalseAlarmProbability = double.NaN;
        FrameWorstCount = 0;
        FramePersistent = false;
    }

    /// <summary>Takes the strongest qualifying line of the frame that maps here.</summary>
    public void OfferLine(FrameLine line)
    {
        if (SeenThisFrame && !(line.AmplitudeUvRms > FrameAmplitudeUvRms))
        {
            return;
        }

        SeenThisFrame = true;
        FrameAmplitudeUvRms = line.AmplitudeUvRms;
        FrameFrequencyHz = line.FrequencyHz;
        FrameShare = line.ChannelShare;
        FrameFalseAlarmProbability = line.FalseAlarmProbability;
        FrameEvidenceStart = line.EvidenceStartSampleIndex;
        FrameEvidenceEnd = line.EvidenceEndSampleIndex;
        FramePersistent = line.IsPersistent;
        FrameLineEvidence = line.Evidence;
        var alternatives = line.AlsoPossible;
        FrameAlternativeCount = alternatives.Length;
        alternatives.CopyTo(FrameAlternatives);
        var worst = line.WorstChannels;
        FrameWorstCount = worst.Length;
        worst.CopyTo(FrameWorst);
    }

    /// <summary>The line tracker found the frame's line persistent (faults always are).</summary>
    public bool FramePersistent;

    public Tracking.LineEvidence FrameLineEvidence = Tracking.LineEvidence.None;

    public readonly SourceMatch[] FrameAlternatives = new SourceMatch[FrameLine.MaxAlternatives];

    public int FrameAlternativeCount;

    public void OfferFault(int channelCount)
    {
        SeenThisFrame = true;
        FrameShare = 1.0 / channelCount;
    }

    private void Reset()
    {
        BeginFrame();
        Source = SourceMatch.None;
        Channel = -1;
        AboveRun = 0;
        BelowRun = 0;
        Raised = false;
        Key = default;
        Active = null;
        PeakAmplitudeUvRms = double.NaN;
        Severity = AlertSeverity.None;
        PeakSeverity = AlertSeverity.None;
        SeverityRun = 0;
        FrameWorstCount = 0;
    }
}
