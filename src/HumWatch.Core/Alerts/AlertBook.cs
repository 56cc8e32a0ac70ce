using HumWatch.Core.Analysis;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Findings;
using HumWatch.Core.Lines;
using HumWatch.Core.Signals;

namespace HumWatch.Core.Alerts;

/// <summary>
/// Turns a stream session's frames into alert events with hysteresis: a finding is raised after
/// <see cref="AlertOptions.RaiseAfterFrames"/> consecutive qualifying frames and cleared after
/// <see cref="AlertOptions.ClearAfterFrames"/> frames without it. Pure: times come in as arguments.
/// Not thread-safe; one per stream session. Allocates only when an event happens (tracks are pooled).
/// </summary>
public sealed class AlertBook
{
    private readonly AlertOptions _options;
    private readonly List<Track> _tracks = [];
    private readonly Stack<Track> _free = new();
    private readonly List<ActiveAlert> _active = [];
    private readonly double _dropFactor;
    private readonly double _unidentifiedLevelUvRms;
    private StreamLayout? _layout;

    /// <param name="streamId">Stream the events belong to.</param>
    /// <param name="options">Validated options, read on each frame: do not change them while the book is in use.</param>
    public AlertBook(string streamId, AlertOptions options)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(streamId);
        ArgumentNullException.ThrowIfNull(options);
        var errors = options.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentOutOfRangeException(nameof(options), string.Join(" ", errors));
        }

        StreamId = streamId;
        _options = options;
        _dropFactor = 1 / (1 - (options.SeverityDropMarginPercent / 100));
        _unidentifiedLevelUvRms = Math.Max(options.MinorUvRms, options.LevelUvRms(options.UnidentifiedMinSeverity));
    }

    /// <summary>Stream the events belong to.</summary>
    public string StreamId { get; }

    /// <summary>Alerts raised and not yet cleared.</summary>
    public IReadOnlyCollection<ActiveAlert> Active => _active;

    /// <summary>Feeds one frame. Read the frame here only; nothing of it is kept.</summary>
    /// <param name="frame">The analyser's frame (reused by the analyser).</param>
    /// <param name="frameEndUtc">UTC time of the frame's last sample.</param>
    /// <param name="sink">Receives events, in order, before this call returns.</param>
    public void Observe(AnalysisFrame frame, DateTimeOffset frameEndUtc, IAlertEventSink sink)
    {
        ArgumentNullException.ThrowIfNull(frame);
        ArgumentNullException.ThrowIfNull(sink);
        if (_layout is null)
        {
            _layout = frame.Layout;
        }
        else if (!ReferenceEquals(_layout, frame.Layout) && !_layout.IsSameShape(frame.Layout))
        {
            throw new ArgumentException($"Stream {StreamId}: frame layout changed; a new layout starts a new session and needs a new AlertBook.", nameof(frame));
        }

        for (var i = 0; i < _tracks.Count; i++)
        {
            _tracks[i].BeginFrame();
        }

        MatchLines(frame);
        if (_options.ChannelFaultAlerts)
        {
            MatchFaults(frame);
        }

        for (var i = 0; i < _tracks.Count; i++)
        {
            var track = _tracks[i];
            if (Advance(track, frame, frameEndUtc, sink))
            {
                _tracks.RemoveAt(i);
                _free.Push(track);
                i--;
            }
        }
    }

    /// <summary>Ends the session: every active alert clears with reason "stream ended"; pending ones are dropped.</summary>
    /// <param name="streamSeconds">Stream time of the end, s.</param>
    /// <param name="utc">UTC time of the end.</param>
    /// <param name="sink">Receives the clear events.</param>
    public void Flush(double streamSeconds, DateTimeOffset utc, IAlertEventSink sink)
    {
        ArgumentNullException.ThrowIfNull(sink);
        for (var i = 0; i < _tracks.Count; i++)
        {
            var track = _tracks[i];
            if (track.Raised)
            {
                Clear(track, streamSeconds, utc, AlertClearReason.StreamEnded, sink);
            }

            _free.Push(track);
        }

        _tracks.Clear();
    }

    private void MatchLines(AnalysisFrame frame)
    {
        var lines = frame.Lines;
        var clusterHz = _options.UnidentifiedClusterBins * frame.BinWidthHz;
        for (var i = 0; i < lines.Length; i++)
        {
            var line = lines[i];
            var source = line.Source;
            var identified = source.IsIdentified;
            if (!identified && !_options.AlertOnUnidentified)
            {
                continue;
            }

            var levelUvRms = identified ? _options.MinorUvRms : _unidentifiedLevelUvRms;
            var qualifies = line.AmplitudeUvRms >= levelUvRms && line.ChannelShare >= _options.MinChannelShare;
            var track = FindLineTrack(source, line.FrequencyHz, clusterHz);
            if (track is null)
            {
                if (!qualifies)
                {
                    continue;
                }

                track = Rent();
                track.StartLine(source, line.FrequencyHz);
                _tracks.Add(track);
            }

            if (qualifies)
            {
                track.OfferLine(line);
            }
        }
    }

    private void MatchFaults(AnalysisFrame frame)
    {
        var faults = frame.Faults;
        for (var i = 0; i < faults.Length; i++)
        {
            var fault = faults[i];
            Track? track = null;
            for (var t = 0; t < _tracks.Count; t++)
            {
                var candidate = _tracks[t];
                if (candidate.Category == AlertCategory.ChannelFault && candidate.Channel == fault.Channel && candidate.FaultKind == fault.Kind)
                {
                    track = candidate;
                    break;
                }
            }

            if (track is null)
            {
                track = Rent();
                track.StartFault(fault.Channel, fault.Kind);
                _tracks.Add(track);
            }

            track.OfferFault(frame.Layout.ChannelCount);
        }
    }

    private Track? FindLineTrack(SourceMatch source, double frequencyHz, double clusterHz)
    {
        for (var t = 0; t < _tracks.Count; t++)
        {
            var track = _tracks[t];
            if (track.Category != AlertCategory.Line || track.Source.Kind != source.Kind)
            {
                continue;
            }

            if (source.IsIdentified)
            {
                if (track.Source.Harmonic == source.Harmonic
                    && track.Source.Aliased == source.Aliased
                    && string.Equals(track.Source.Name, source.Name, StringComparison.Ordinal))
                {
                    return track;
                }
            }
            else if (Math.Abs(track.FrequencyHz - frequencyHz) <= clusterHz)
            {
                return track;
            }
        }

        return null;
    }

    private Track Rent() => _free.Count > 0 ? _free.Pop() : new Track();

    /// <summary>Moves one track's state machine by one frame; true when the track is finished and can be pooled.</summary>
    private bool Advance(Track track, AnalysisFrame frame, DateTimeOffset frameEndUtc, IAlertEventSink sink)
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

    private AlertSeverity LevelOf(Track track, double amplitudeUvRms)
    {
        if (track.Category == AlertCategory.ChannelFault)
        {
            return _options.ChannelFaultSeverity;
        }

        var level = _options.SeverityOf(amplitudeUvRms);
        return track.Source.IsIdentified || level >= _options.UnidentifiedMinSeverity ? level : _options.UnidentifiedMinSeverity;
    }

    private void StepSeverity(Track track, AlertSeverity level, AnalysisFrame frame, DateTimeOffset frameEndUtc, IAlertEventSink sink)
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

    private void Raise(Track track, AlertSeverity level, AnalysisFrame frame, DateTimeOffset frameEndUtc, IAlertEventSink sink)
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

    private void Clear(Track track, double streamSeconds, DateTimeOffset utc, AlertClearReason reason, IAlertEventSink sink)
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

    private void ReplaceActive(Track track, ActiveAlert replacement)
    {
        var index = _active.IndexOf(track.Active!);
        _active[index] = replacement;
        track.Active = replacement;
    }

    private static string[] WorstLabels(Track track, StreamLayout layout)
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

    /// <summary>Per-finding state; pooled and reused.</summary>
    private sealed class Track
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
}
