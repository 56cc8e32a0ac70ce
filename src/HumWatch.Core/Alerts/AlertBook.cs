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
public sealed partial class AlertBook
{
    private readonly AlertOptions _options;
    private readonly List<AlertTrack> _tracks = [];
    private readonly Stack<AlertTrack> _free = new();
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
            AlertTrack? track = null;
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

    private AlertTrack? FindLineTrack(SourceMatch source, double frequencyHz, double clusterHz)
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

    private AlertTrack Rent() => _free.Count > 0 ? _free.Pop() : new AlertTrack();
}
