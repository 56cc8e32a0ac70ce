using HumWatch.Core.Analysis;
using HumWatch.Core.Faults;
using HumWatch.Core.Findings;
using HumWatch.Core.Signals;

namespace HumWatch.Core.Alerts;

// One finding's state machine (pending → raised → severity steps → cleared) and the events it emits.
public sealed partial class AlertBook
{
    /// <summary>Moves one track's state machine by one frame; true when the track is finished and can be pooled.</summary>
    private bool Advance(AlertTrack track, AnalysisFrame frame, DateTimeOffset frameEndUtc, IAlertEventSink sink)
    {
        if (!track.SeenThisFrame)
        {
            track.AboveRun = 0;
            track.BelowRun++;
            track.SeverityRun = 0;
            if (!track.Raised)
            {
                // A gap before the raise count is reached starts the count again.
                return true;
            }

            if (track.BelowRun >= _options.ClearAfterFrames)
            {
                Clear(track, frame.EndSeconds, frameEndUtc, AlertClearReason.Subsided, sink);
                return true;
            }

            return false;
        }

        track.BelowRun = 0;
        track.AboveRun++;
        if (track.AboveRun == 1 && !track.Raised)
        {
            // The line's own evidence dates the onset to one Welch segment step; otherwise the span start.
            var onsetSample = frame.StartSampleIndex;
            if (track.Category == AlertCategory.Line
                && track.FrameEvidenceEnd > track.FrameEvidenceStart
                && track.FrameEvidenceStart >= frame.StartSampleIndex
                && track.FrameEvidenceStart < frame.EndSampleIndex)
            {
                onsetSample = track.FrameEvidenceStart;
            }

            track.OnsetSeconds = onsetSample / frame.Layout.SampleRateHz;
            track.OnsetUtc = frameEndUtc - TimeSpan.FromSeconds(frame.EndSeconds - track.OnsetSeconds);
            track.PeakAmplitudeUvRms = double.NaN;
        }

        track.LastQualifyingEndSeconds = frame.EndSeconds;
        if (track.Category == AlertCategory.Line)
        {
            track.FrequencyHz = track.FrameFrequencyHz;
            if (!(track.PeakAmplitudeUvRms >= track.FrameAmplitudeUvRms))
            {
                track.PeakAmplitudeUvRms = track.FrameAmplitudeUvRms;
            }
        }

        var level = LevelOf(track, track.FrameAmplitudeUvRms);
        if (!track.Raised)
        {
            // The tracker's persistence is the one definition of a line that counts; faults persist by their own run.
            if (track.AboveRun >= _options.RaiseAfterFrames && (track.Category == AlertCategory.ChannelFault || track.FramePersistent))
            {
                Raise(track, level, frame, frameEndUtc, sink);
            }

            return false;
        }

        if (track.Category == AlertCategory.Line)
        {
            StepSeverity(track, level, frame, frameEndUtc, sink);
        }

        return false;
    }

    private AlertSeverity LevelOf(AlertTrack track, double amplitudeUvRms)
    {
        if (track.Category == AlertCategory.ChannelFault)
        {
            return _options.ChannelFaultSeverity;
        }

        var level = _options.SeverityOf(amplitudeUvRms);
        return track.Source.IsIdentified || level >= _options.UnidentifiedMinSeverity ? level : _options.UnidentifiedMinSeverity;
    }

    private void StepSeverity(AlertTrack track, AlertSeverity level, AnalysisFrame frame, DateTimeOffset frameEndUtc, IAlertEventSink sink)
    {
        var candidate = track.Severity;
        if (level > track.Severity)
        {
            candidate = level;
        }
        else if (level < track.Severity)
        {
            // Drop only when clearly below the current level's start, so an amplitude at the edge does not flap.
            var dropLevel = LevelOf(track, track.FrameAmplitudeUvRms * _dropFactor);
            if (dropLevel < track.Severity)
            {
                candidate = dropLevel;
            }
        }

        if (candidate == track.Severity)
        {
            track.SeverityRun = 0;
            return;
        }

        var up = candidate > track.Severity;
        if (track.SeverityRun > 0 && up == (track.SeverityTarget > track.Severity))
        {
            track.SeverityRun++;
            // Move only as far as every frame of the run supports.
            track.SeverityTarget = up
                ? (candidate < track.SeverityTarget ? candidate : track.SeverityTarget)
                : (candidate > track.SeverityTarget ? candidate : track.SeverityTarget);
        }
        else
        {
            track.SeverityRun = 1;
            track.SeverityTarget = candidate;
        }

        if (track.SeverityRun < _options.SeverityHoldFrames)
        {
            return;
        }

        var previous = track.Severity;
        track.Severity = track.SeverityTarget;
        track.SeverityRun = 0;
        if (track.Severity > track.PeakSeverity)
        {
            track.PeakSeverity = track.Severity;
        }

        var worst = WorstLabels(track, frame.Layout);
        var changed = new AlertSeverityChanged(
            StreamId, track.Key, track.Category, track.Source, null, frame.EndSeconds, frameEndUtc,
            track.FrequencyHz, track.FrameAmplitudeUvRms, track.FrameShare, worst, previous, track.Severity,
            track.Category == AlertCategory.ChannelFault ? double.NaN : track.FrameFalseAlarmProbability);
        ReplaceActive(track, track.Active! with { Severity = track.Severity, FrequencyHz = track.FrequencyHz, WorstChannels = worst });
        sink.OnAlertEvent(changed);
    }

    private void Raise(AlertTrack track, AlertSeverity level, AnalysisFrame frame, DateTimeOffset frameEndUtc, IAlertEventSink sink)
    {
        track.Raised = true;
        track.Severity = level;
        track.PeakSeverity = level;
        track.SeverityRun = 0;
        var worst = WorstLabels(track, frame.Layout);
        FindingKey key;
        string suggestion;
        ChannelFaultKind? faultKind = null;
        double frequencyHz;
        double amplitudeUvRms;
        if (track.Category == AlertCategory.ChannelFault)
        {
            var label = frame.Layout.Channels[track.Channel].Label;
            key = FindingKey.ChannelFault(label, track.FaultKind);
            suggestion = Suggestions.ForFault(track.FaultKind, label);
            faultKind = track.FaultKind;
            frequencyHz = double.NaN;
            amplitudeUvRms = double.NaN;
        }
        else
        {
            key = FindingKey.ForLine(track.Source, track.FrequencyHz);
            suggestion = Suggestions.For(track.Source, Math.Clamp(track.FrameShare, 0, 1), worst);
            frequencyHz = track.FrequencyHz;
            amplitudeUvRms = track.FrameAmplitudeUvRms;
        }

        track.Key = key;
        var active = new ActiveAlert(key, track.Category, track.Source, faultKind, frequencyHz, level, track.OnsetUtc, worst, suggestion);
        track.Active = active;
        _active.Add(active);
        sink.OnAlertEvent(new AlertRaised(
            StreamId, key, track.Category, track.Source, faultKind, frame.EndSeconds, frameEndUtc,
            track.OnsetSeconds, track.OnsetUtc, frequencyHz, amplitudeUvRms, track.FrameShare, worst, suggestion, level,
            track.Category == AlertCategory.ChannelFault ? double.NaN : track.FrameFalseAlarmProbability)
        {
            Evidence = track.Category == AlertCategory.Line ? track.FrameLineEvidence : Tracking.LineEvidence.None,
            AlsoPossible = track.Category == AlertCategory.Line ? [.. track.FrameAlternatives.AsSpan(0, track.FrameAlternativeCount)] : [],
        });
    }

    private void Clear(AlertTrack track, double streamSeconds, DateTimeOffset utc, AlertClearReason reason, IAlertEventSink sink)
    {
        _active.Remove(track.Active!);
        var isFault = track.Category == AlertCategory.ChannelFault;
        sink.OnAlertEvent(new AlertCleared(
            StreamId, track.Key, track.Category, track.Source, isFault ? track.FaultKind : null, streamSeconds, utc,
            isFault ? double.NaN : track.FrequencyHz, reason, track.LastQualifyingEndSeconds - track.OnsetSeconds,
            isFault ? double.NaN : track.PeakAmplitudeUvRms, track.PeakSeverity, track.Severity));
        track.Raised = false;
        track.Active = null;
    }

    private void ReplaceActive(AlertTrack track, ActiveAlert replacement)
    {
        var index = _active.IndexOf(track.Active!);
        _active[index] = replacement;
        track.Active = replacement;
    }

    private static string[] WorstLabels(AlertTrack track, StreamLayout layout)
    {
        if (track.Category == AlertCategory.ChannelFault)
        {
            return [layout.Channels[track.Channel].Label];
        }

        var labels = new string[track.FrameWorstCount];
        for (var i = 0; i < labels.Length; i++)
        {
            labels[i] = layout.Channels[track.FrameWorst[i]].Label;
        }

        return labels;
    }
}
