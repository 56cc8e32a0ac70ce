using System.Runtime.InteropServices;
using HumWatch.Core.Analysis;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Lines;
using HumWatch.Core.Numerics;

namespace HumWatch.Core.Reporting;

/// <summary>
/// Folds the frames of one stream into episodes of lines and faults with their time extent — the body of a
/// `check` report. A line episode is one <see cref="Tracking.LineTracker"/> track (the same definition of "the same
/// line" the service's alerts and ledger use), reported when the tracker found it persistent, named by the tracker's
/// latest — best informed — explanation. Not for the service's hot path: it keeps per-frame amplitudes for medians.
/// </summary>
public sealed class RecordingAccumulator : IAnalysisFrameSink
{
    private readonly List<LineEpisode> _openLines = [];
    private readonly List<LineFinding> _closedLines = [];
    private readonly Dictionary<(int Channel, ChannelFaultKind Kind), FaultEpisode> _openFaults = [];
    private readonly List<FaultFinding> _closedFaults = [];
    private readonly List<double> _mainsEstimates = [];
    private readonly double _mergeGapSeconds;
    private readonly double _hopSeconds;
    private int _transientPeaks;
    private double _lastFrameEndSeconds;
    private double _analysedSeconds;
    private int _frameCount;
    private double _gridNominalHz = double.NaN;
    private Tracking.GridOrigin _gridFrom;
    private double _gridConflictHz = double.NaN;

    /// <param name="hopSeconds">Time between frames; each frame accounts for this much new time.</param>
    /// <param name="mergeGapSeconds">How long an episode whose track has not been seen stays open (at least the tracker's own merge gap, one span).</param>
    public RecordingAccumulator(double hopSeconds, double mergeGapSeconds)
    {
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(hopSeconds);
        ArgumentOutOfRangeException.ThrowIfNegative(mergeGapSeconds);
        _hopSeconds = hopSeconds;
        _mergeGapSeconds = mergeGapSeconds;
    }

    public void OnFrame(AnalysisFrame frame)
    {
        ArgumentNullException.ThrowIfNull(frame);
        var frameEnd = frame.EndSeconds;
        var newSeconds = _frameCount == 0 || frame.StartSeconds >= _lastFrameEndSeconds
            ? frame.EndSeconds - frame.StartSeconds
            : Math.Min(_hopSeconds, frameEnd - _lastFrameEndSeconds);
        newSeconds = Math.Max(0, newSeconds);
        _analysedSeconds += newSeconds;
        _frameCount++;
        _lastFrameEndSeconds = frameEnd;
        if (double.IsFinite(frame.EstimatedMainsHz))
        {
            _mainsEstimates.Add(frame.EstimatedMainsHz);
        }

        _gridNominalHz = frame.GridNominalHz;
        _gridFrom = frame.GridFrom;
        if (double.IsFinite(frame.GridConflictHz))
        {
            _gridConflictHz = frame.GridConflictHz;
        }

        var rate = frame.Layout.SampleRateHz;
        foreach (var line in frame.Lines)
        {
            if (line.TrackId == 0)
            {
                throw new InvalidOperationException("Frames reach the recording accumulator through a LineTracker, which gives every line its identity.");
            }

            var episode = FindOpenEpisode(line.TrackId);
            if (episode is null)
            {
                episode = new LineEpisode(line.TrackId);
                _openLines.Add(episode);
            }

            episode.Add(line, frame, rate, newSeconds);
        }

        foreach (var fault in frame.Faults)
        {
            var key = (fault.Channel, fault.Kind);
            if (!_openFaults.TryGetValue(key, out var episode))
            {
                // The newest hop of the span is what brought the fault in.
                episode = new FaultEpisode(Math.Max(frame.StartSeconds, frameEnd - _hopSeconds));
                _openFaults.Add(key, episode);
            }

            episode.LastSeenFrameEndSeconds = frameEnd;
            episode.LastFrameStartSeconds = frame.StartSeconds;
        }

        CloseStale(frame);
    }

    /// <summary>Closes every open episode and returns what the stream showed.</summary>
    public RecordingFindings Complete(Signals.StreamLayout layout)
    {
        ArgumentNullException.ThrowIfNull(layout);
        foreach (var episode in _openLines)
        {
            Close(episode, layout);
        }

        _openLines.Clear();
        foreach (var (key, episode) in _openFaults)
        {
            _closedFaults.Add(episode.ToFinding(key.Channel, layout.Channels[key.Channel].Label, key.Kind));
        }

        _openFaults.Clear();
        var lines = StableOrder.Sorted(_closedLines, static (a, b) => Then(b.AmplitudeUvRms.CompareTo(a.AmplitudeUvRms), a.FirstSeconds.CompareTo(b.FirstSeconds)));
        var faults = StableOrder.Sorted(_closedFaults, static (a, b) => Then(a.FirstSeconds.CompareTo(b.FirstSeconds), a.Channel.CompareTo(b.Channel)));
        double? mains = _mainsEstimates.Count == 0 ? null : MedianOf(_mainsEstimates);
        var grid = new GridFinding(double.IsFinite(_gridNominalHz) ? _gridNominalHz : null, _gridFrom, double.IsFinite(_gridConflictHz) ? _gridConflictHz : null);
        return new RecordingFindings(layout.SampleRateHz, layout.ChannelCount, _analysedSeconds, _frameCount, mains, lines, faults, _transientPeaks) { Grid = grid };
    }

    private LineEpisode? FindOpenEpisode(int trackId)
    {
        foreach (var episode in _openLines)
        {
            if (episode.TrackId == trackId)
            {
                return episode;
            }
        }

        return null;
    }

    private void CloseStale(AnalysisFrame frame)
    {
        for (var i = _openLines.Count - 1; i >= 0; i--)
        {
            if (frame.EndSeconds - _openLines[i].LastSeenFrameEndSeconds > _mergeGapSeconds)
            {
                Close(_openLines[i], frame.Layout);
                _openLines.RemoveAt(i);
            }
        }

        List<(int, ChannelFaultKind)>? stale = null;
        foreach (var (key, episode) in _openFaults)
        {
            if (frame.EndSeconds - episode.LastSeenFrameEndSeconds > _mergeGapSeconds)
            {
                (stale ??= []).Add(key);
            }
        }

        if (stale is null)
        {
            return;
        }

        foreach (var key in stale)
        {
            _closedFaults.Add(_openFaults[key].ToFinding(key.Item1, frame.Layout.Channels[key.Item1].Label, key.Item2));
            _openFaults.Remove(key);
        }
    }

    private void Close(LineEpisode episode, Signals.StreamLayout layout)
    {
        if (episode.EverPersistent)
        {
            _closedLines.Add(episode.ToFinding(layout));
        }
        else
        {
            _transientPeaks++;
        }
    }

    /// <summary>The kept figures stay in arrival order; the median sorts a copy.</summary>
    private static double MedianOf(List<double> values) => Median.Of(CollectionsMarshal.AsSpan(values));

    /// <summary>A comparison by one key, then by another where the first ties.</summary>
    private static int Then(int first, int second) => first != 0 ? first : second;

    private sealed class LineEpisode(int trackId)
    {
        private readonly List<double> _frequencies = [];
        private readonly List<double> _amplitudes = [];
        private readonly List<double> _shares = [];
        private readonly List<double> _falseAlarmProbabilities = [];
        private readonly Dictionary<int, double> _channelScores = [];
        private SourceMatch[] _alternatives = [];
        private double _maxAmplitude;
        private double _maxProminence;
        private int _maxAffected;
        private double _firstSeconds = double.MaxValue;
        private double _lastSeconds;
        private double _presentSeconds;

        public int TrackId { get; } = trackId;

        /// <summary>The tracker found the line persistent in at least one frame.</summary>
        public bool EverPersistent { get; private set; }

        /// <summary>The latest explanation: the tracker's evidence grows with every frame.</summary>
        public SourceMatch Source { get; private set; } = SourceMatch.None;

        public Tracking.LineEvidence Evidence { get; private set; } = Tracking.LineEvidence.None;

        public double LastSeenFrameEndSeconds { get; private set; }

        public void Add(FrameLine line, AnalysisFrame frame, double sampleRateHz, double newSeconds)
        {
            EverPersistent |= line.IsPersistent;
            Source = line.Source;
            Evidence = line.Evidence;
            if (_alternatives.Length != line.AlsoPossible.Length)
            {
                _alternatives = new SourceMatch[line.AlsoPossible.Length];
            }

            line.AlsoPossible.CopyTo(_alternatives);
            LastSeenFrameEndSeconds = frame.EndSeconds;
            _frequencies.Add(line.FrequencyHz);
            _amplitudes.Add(line.AmplitudeUvRms);
            _shares.Add(line.ChannelShare);
            if (!double.IsNaN(line.FalseAlarmProbability))
            {
                _falseAlarmProbabilities.Add(line.FalseAlarmProbability);
            }

            _maxAmplitude = Math.Max(_maxAmplitude, line.MaxAmplitudeUvRms);
            _maxProminence = Math.Max(_maxProminence, line.ProminenceDb);
            _maxAffected = Math.Max(_maxAffected, line.AffectedChannelCount);
            _firstSeconds = Math.Min(_firstSeconds, line.EvidenceStartSampleIndex / sampleRateHz);
            _lastSeconds = Math.Max(_lastSeconds, line.EvidenceEndSampleIndex / sampleRateHz);
            _presentSeconds += newSeconds;
            var worst = line.WorstChannels;
            var amplitudes = line.WorstAmplitudesUvRms;
            for (var i = 0; i < worst.Length; i++)
            {
                _channelScores[worst[i]] = _channelScores.GetValueOrDefault(worst[i]) + amplitudes[i];
            }
        }

        public LineFinding ToFinding(Signals.StreamLayout layout)
        {
            // Highest score first, then the lower channel number; channels are unique, so the order is total.
            var ranked = new (int Channel, double Score)[_channelScores.Count];
            var n = 0;
            foreach (var (channel, score) in _channelScores)
            {
                ranked[n++] = (channel, score);
            }

            Array.Sort(ranked, static (a, b) => Then(b.Score.CompareTo(a.Score), a.Channel.CompareTo(b.Channel)));
            var worst = new List<string>(Math.Min(ranked.Length, FrameLine.MaxWorstChannels));
            for (var i = 0; i < worst.Capacity; i++)
            {
                worst.Add(layout.Channels[ranked[i].Channel].Label);
            }

            return new LineFinding(
                MedianOf(_frequencies),
                Source,
                [.. _alternatives.Select(LineFinding.Describe)],
                MedianOf(_amplitudes),
                _maxAmplitude,
                _maxProminence,
                MedianOf(_shares),
                _maxAffected,
                worst,
                _firstSeconds,
                _lastSeconds,
                _presentSeconds,
                MedianOf(_falseAlarmProbabilities))
            {
                Evidence = Evidence,
            };
        }
    }

    private sealed class FaultEpisode(double firstSeconds)
    {
        public double FirstSeconds { get; } = firstSeconds;

        public double LastSeenFrameEndSeconds { get; set; }

        public double LastFrameStartSeconds { get; set; }

        public FaultFinding ToFinding(int channel, string label, ChannelFaultKind kind) =>
            new(channel, label, kind, FirstSeconds, Math.Max(FirstSeconds, LastSeenFrameEndSeconds));
    }
}
