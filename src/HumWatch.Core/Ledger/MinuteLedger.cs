using System.Runtime.InteropServices;
using HumWatch.Core.Analysis;
using HumWatch.Core.Findings;
using HumWatch.Core.Lines;
using HumWatch.Core.Numerics;

namespace HumWatch.Core.Ledger;

/// <summary>
/// Per-minute bookkeeping of one stream session. Each frame contributes the stream time it adds beyond the previous
/// frame (a hop; the whole span after a start or a gap), placed in UTC by the frame's end time and split at minute
/// boundaries. A minute's rows are emitted when a later minute's data arrives, or on <see cref="Flush"/>.
/// Pure and not thread-safe; allocates in steady state only when rows are emitted.
/// </summary>
/// <param name="streamId">Stream the rows belong to.</param>
/// <param name="sessionId">Identifies this session's rows; use a value that repeats when the same input is processed again (e.g. a file's hash) so a re-run is not counted twice.</param>
/// <param name="minAmplitudeUvRms">Lines at or above this amplitude count as affecting the minute, µV RMS. The default is 1 µV (the alert level "minor").</param>
/// <remarks>Only lines the <see cref="Tracking.LineTracker"/> found persistent count, as for alerts and `check`.</remarks>
public sealed class MinuteLedger(string streamId, string sessionId, double minAmplitudeUvRms = 1.0)
{
    /// <summary>Source key of the row that describes the stream as a whole (any line); text "*".</summary>
    public static FindingKey AllSourcesKey => FindingKey.All;

    // First initialiser, so bad arguments throw before anything else is set up.
    private readonly double _minAmplitudeUvRms = SessionArguments.CheckedLevel(streamId, sessionId, minAmplitudeUvRms);
    private readonly Dictionary<FindingKey, SourceTally> _tallies = [];
    private readonly List<SourceTally> _ordered = [];
    private readonly Stack<SourceTally> _free = new();
    private readonly List<double> _mainsHz = [];
    private readonly SourceTally _all = new(AllSourcesKey);
    private string[] _labels = [];
    private long _openMinuteTicks = long.MinValue;
    private double _monitoredSeconds;
    private double _lastEndSeconds = double.NegativeInfinity;
    private long _frameNumber;
    private long _sequence;

    /// <summary>Stream the rows belong to.</summary>
    public string StreamId { get; } = streamId;

    /// <summary>Session the rows belong to.</summary>
    public string SessionId { get; } = sessionId;

    /// <summary>Feeds one frame; may emit the rows of minutes this frame moves past.</summary>
    /// <param name="frame">The analyser's frame (reused by the analyser; nothing of it is kept).</param>
    /// <param name="frameEndUtc">UTC time of the frame's last sample.</param>
    /// <param name="sink">Receives completed minute rows.</param>
    public void Observe(AnalysisFrame frame, DateTimeOffset frameEndUtc, IMinuteRowSink sink)
    {
        ArgumentNullException.ThrowIfNull(frame);
        ArgumentNullException.ThrowIfNull(sink);
        if (_labels.Length == 0)
        {
            _labels = new string[frame.Layout.ChannelCount];
            for (var c = 0; c < _labels.Length; c++)
            {
                _labels[c] = frame.Layout.Channels[c].Label;
            }
        }
        else if (_labels.Length != frame.Layout.ChannelCount)
        {
            throw new ArgumentException($"Stream {StreamId}: channel count changed; a new layout needs a new MinuteLedger.", nameof(frame));
        }

        // Only the part of the span not covered by the previous frame is new monitored time.
        var newStartSeconds = Math.Max(frame.StartSeconds, _lastEndSeconds);
        var newSeconds = frame.EndSeconds - newStartSeconds;
        if (!(newSeconds > 0))
        {
            return;
        }

        _lastEndSeconds = frame.EndSeconds;
        _frameNumber++;
        var endTicks = frameEndUtc.UtcTicks;
        var startTicks = endTicks - (long)Math.Round(newSeconds * TimeSpan.TicksPerSecond);
        while (startTicks < endTicks)
        {
            var minuteTicks = startTicks - (startTicks % TimeSpan.TicksPerMinute);
            var pieceEndTicks = Math.Min(endTicks, minuteTicks + TimeSpan.TicksPerMinute);
            if (minuteTicks != _openMinuteTicks)
            {
                EmitOpenMinute(sink);
                _openMinuteTicks = minuteTicks;
            }

            AddPiece(frame, (double)(pieceEndTicks - startTicks) / TimeSpan.TicksPerSecond);
            startTicks = pieceEndTicks;
        }
    }

    /// <summary>Emits the open minute's rows (end of stream or shutdown).</summary>
    public void Flush(IMinuteRowSink sink)
    {
        ArgumentNullException.ThrowIfNull(sink);
        EmitOpenMinute(sink);
    }

    private void AddPiece(AnalysisFrame frame, double seconds)
    {
        _monitoredSeconds += seconds;
        if (double.IsFinite(frame.EstimatedMainsHz))
        {
            _mainsHz.Add(frame.EstimatedMainsHz);
        }

        var lines = frame.Lines;
        FrameLine? strongest = null;
        for (var i = 0; i < lines.Length; i++)
        {
            var line = lines[i];
            if (!(line.AmplitudeUvRms >= _minAmplitudeUvRms) || !line.IsPersistent)
            {
                continue;
            }

            var key = FindingKey.ForLine(line.Source, line.FrequencyHz, frame.BinWidthHz);

            var tally = TallyFor(key);
            tally.AddLine(_frameNumber, seconds, line);
            if (strongest is null || line.AmplitudeUvRms > strongest.AmplitudeUvRms)
            {
                strongest = line;
            }
        }

        if (strongest is not null)
        {
            _all.AddLine(_frameNumber, seconds, strongest);
        }

        var faults = frame.Faults;
        for (var i = 0; i < faults.Length; i++)
        {
            var fault = faults[i];
            if ((uint)fault.Channel >= (uint)_labels.Length)
            {
                continue;
            }

            TallyFor(FindingKey.ChannelFault(_labels[fault.Channel], fault.Kind)).AddFault(_frameNumber, seconds, fault.Channel);
        }
    }

    private SourceTally TallyFor(FindingKey key)
    {
        if (!_tallies.TryGetValue(key, out var tally))
        {
            tally = _free.Count > 0 ? _free.Pop() : new SourceTally(key);
            tally.Reset(key);
            _tallies.Add(key, tally);
        }

        return tally;
    }

    private void EmitOpenMinute(IMinuteRowSink sink)
    {
        if (_openMinuteTicks == long.MinValue)
        {
            return;
        }

        var minuteUtc = new DateTimeOffset(_openMinuteTicks, TimeSpan.Zero);
        var mainsHz = MedianInPlace(_mainsHz);
        sink.OnMinuteRow(_all.ToRow(this, minuteUtc, mainsHz));

        _ordered.Clear();
        foreach (var tally in _tallies.Values)
        {
            tally.KeyText = tally.Key.ToString();
            _ordered.Add(tally);
        }

        // Rows go out in the order of their key text, as they always have, so a re-run numbers them the same way.
        _ordered.Sort(static (a, b) => string.CompareOrdinal(a.KeyText, b.KeyText));
        for (var i = 0; i < _ordered.Count; i++)
        {
            sink.OnMinuteRow(_ordered[i].ToRow(this, minuteUtc, mainsHz));
            _free.Push(_ordered[i]);
        }

        _ordered.Clear();
        _tallies.Clear();
        _all.Reset(AllSourcesKey);
        _mainsHz.Clear();
        _monitoredSeconds = 0;
        _openMinuteTicks = long.MinValue;
    }

    /// <summary>The minute's figures are cleared once its rows are out, so sorting them in place is free.</summary>
    private static double MedianInPlace(List<double> values) => Median.SortInPlace(CollectionsMarshal.AsSpan(values));

    /// <summary>One source's figures within the open minute; pooled.</summary>
    private sealed class SourceTally(FindingKey key)
    {
        private readonly List<double> _amplitudesUvRms = [];
        private readonly List<(int Channel, double AmplitudeUvRms)> _channels = [];
        private long _lastFrame;
        private double _affectedSeconds;
        private double _maxUvRms = double.NaN;

        public FindingKey Key { get; private set; } = key;

        /// <summary>The key's text, set when the minute's rows are ordered.</summary>
        public string KeyText { get; set; } = "";

        public void Reset(FindingKey key)
        {
            Key = key;
            KeyText = "";
            _amplitudesUvRms.Clear();
            _channels.Clear();
            _lastFrame = 0;
            _affectedSeconds = 0;
            _maxUvRms = double.NaN;
        }

        public void AddLine(long frame, double seconds, FrameLine line)
        {
            var amplitude = line.AmplitudeUvRms;
            if (frame != _lastFrame)
            {
                _lastFrame = frame;
                _affectedSeconds += seconds;
                _amplitudesUvRms.Add(amplitude);
            }
            else if (amplitude > _amplitudesUvRms[^1])
            {
                // Two lines of one frame under one key (or one frame split over two pieces): keep the stronger once.
                _amplitudesUvRms[^1] = amplitude;
            }

            if (!(_maxUvRms >= amplitude))
            {
                _maxUvRms = amplitude;
            }

            var worst = line.WorstChannels;
            var worstUv = line.WorstAmplitudesUvRms;
            for (var i = 0; i < worst.Length; i++)
            {
                OfferChannel(worst[i], worstUv[i]);
            }
        }

        public void AddFault(long frame, double seconds, int channel)
        {
            if (frame != _lastFrame)
            {
                _lastFrame = frame;
                _affectedSeconds += seconds;
            }

            OfferChannel(channel, double.PositiveInfinity);
        }

        public MinuteRow ToRow(MinuteLedger owner, DateTimeOffset minuteUtc, double mainsHz)
        {
            var median = MedianInPlace(_amplitudesUvRms);
            // Worst first; the list is at most one entry per channel.
            _channels.Sort(static (a, b) => b.AmplitudeUvRms.CompareTo(a.AmplitudeUvRms));
            var count = Math.Min(_channels.Count, FrameLine.MaxWorstChannels);
            var labels = new string[count];
            for (var i = 0; i < count; i++)
            {
                labels[i] = owner._labels[_channels[i].Channel];
            }

            return new MinuteRow(
                owner.StreamId, owner.SessionId, ++owner._sequence, minuteUtc, Key, owner._monitoredSeconds,
                _affectedSeconds, _maxUvRms, median, labels, mainsHz);
        }

        private void OfferChannel(int channel, double amplitudeUvRms)
        {
            for (var i = 0; i < _channels.Count; i++)
            {
                if (_channels[i].Channel == channel)
                {
                    if (amplitudeUvRms > _channels[i].AmplitudeUvRms)
                    {
                        _channels[i] = (channel, amplitudeUvRms);
                    }

                    return;
                }
            }

            _channels.Add((channel, amplitudeUvRms));
        }
    }
}
