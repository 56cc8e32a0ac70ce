using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Ledger;
using HumWatch.Core.Reporting;
using HumWatch.Core.Signals;
using HumWatch.Core.Summaries;
using HumWatch.Core.Tracking;

namespace HumWatch.Host.Monitoring;

/// <summary>
/// One session of one stream: frames in; alert events, minute rows and hourly spectra out, to the sinks of the
/// <see cref="StreamSessionFactory"/> that made it. It makes no frames: whoever reads the samples attaches the analyser
/// (the live monitor's own, or the file checker's) and hands each frame to <see cref="OnFrame"/>. Not thread-safe.
/// </summary>
internal sealed class StreamSession : IAnalysisFrameSink
{
    private readonly LineTracker _tracker;
    private readonly RecordingAccumulator? _report;
    private readonly AlertBook _alerts;
    private readonly MinuteLedger _ledger;
    private readonly HourlySpectrumAccumulator? _spectrum;
    private readonly IAlertEventSink _alertSink;
    private readonly IMinuteRowSink _rowSink;
    private readonly ISpectrumPartSink? _spectrumSink;
    private readonly ILiveFrameSink? _liveFrames;
    private readonly Fleet.StreamSightings? _sightings;
    private readonly Func<DateTimeOffset> _clock;
    private readonly DateTimeOffset? _recordingStartUtc;
    private double _lastEndSeconds;
    private DateTimeOffset _lastEndUtc;
    private bool _ended;

    /// <param name="outputs">Options and sinks shared by every session.</param>
    /// <param name="sessionId">Ledger session id; it repeats for the same input (a file's hash) so a re-run is not counted twice.</param>
    /// <param name="recordingStartUtc">UTC time of sample 0 when the source has no per-chunk times (files); null for live streams.</param>
    /// <param name="report">A check report's accumulator that gets the same frames (dropped files); null for none.</param>
    internal StreamSession(StreamSessionFactory outputs, string streamId, string sessionId, StreamLayout layout, DateTimeOffset? recordingStartUtc, RecordingAccumulator? report, IAlertEventSink? alertSink = null)
    {
        ArgumentNullException.ThrowIfNull(layout);
        StreamId = streamId;
        SessionId = sessionId;
        Layout = layout;
        var monitor = outputs.Monitor;
        _report = report;
        _tracker = new LineTracker(outputs.Analysis);
        _alerts = new AlertBook(streamId, outputs.Alerts);
        _ledger = new MinuteLedger(streamId, sessionId, monitor.LedgerMinAmplitudeUvRms);
        if (outputs.SpectrumSink is { } spectrumSink)
        {
            _spectrum = new HourlySpectrumAccumulator(streamId, sessionId, monitor.LedgerMinAmplitudeUvRms);
            _spectrumSink = spectrumSink;
        }

        _alertSink = alertSink ?? outputs.AlertSink;
        _rowSink = outputs.RowSink;
        _liveFrames = outputs.LiveFrames;
        _sightings = outputs.Sightings;
        _clock = outputs.Time.GetUtcNow;
        _recordingStartUtc = recordingStartUtc;
        _lastEndUtc = recordingStartUtc ?? _clock();
    }

    public string StreamId { get; }

    public string SessionId { get; }

    public StreamLayout Layout { get; }

    public long FramesAnalysed { get; private set; }

    public int LinesInLastFrame { get; private set; }

    public int ActiveAlertCount => _alerts.Active.Count;

    /// <summary>The grid the lines are attributed against: configured, measured from the data, or NaN while unknown.</summary>
    public double GridNominalHz => _tracker.GridNominalHz;

    public GridOrigin GridFrom => _tracker.GridFrom;

    /// <summary>The grid fundamental measured in the latest frame that showed it, Hz; NaN before one did.</summary>
    public double LastMainsEstimateHz { get; private set; } = double.NaN;

    /// <summary>UTC time of the last analysed sample, when the stream supplies times; else null.</summary>
    public DateTimeOffset? LastFrameEndUtcFromStream { get; private set; }

    public void OnFrame(AnalysisFrame frame)
    {
        var endUtc = EndUtcOf(frame);
        _lastEndSeconds = frame.EndSeconds;
        _lastEndUtc = endUtc;
        FramesAnalysed++;
        LinesInLastFrame = frame.Lines.Length;

        // The one fan-out point of a stream's frames: the tracker gives every line its identity, persistence and evidence
        // first, so the report, the alerts, the ledger and the spectra count the same lines with the same names.
        _tracker.Track(frame);
        _report?.OnFrame(frame);
        _alerts.Observe(frame, endUtc, _alertSink);
        _ledger.Observe(frame, endUtc, _rowSink);
        _spectrum?.Observe(frame, endUtc, _spectrumSink!);
        if (double.IsFinite(frame.EstimatedMainsHz))
        {
            LastMainsEstimateHz = frame.EstimatedMainsHz;
        }

        _liveFrames?.OnFrame(StreamId, frame, endUtc);
        _sightings?.Seen(StreamId, endUtc);
    }

    /// <summary>Ends the session once: open alerts clear with "stream ended", the open ledger minute and spectrum part are emitted.</summary>
    public void End()
    {
        if (_ended)
        {
            return;
        }

        _ended = true;
        _alerts.Flush(_lastEndSeconds, _lastEndUtc, _alertSink);
        _ledger.Flush(_rowSink);
        _spectrum?.Flush(_spectrumSink!);
    }

    private DateTimeOffset EndUtcOf(AnalysisFrame frame)
    {
        if (frame.StartUtc is { } startUtc)
        {
            var endUtc = startUtc.AddSeconds((frame.EndSampleIndex - frame.StartSampleIndex) / frame.Layout.SampleRateHz);
            LastFrameEndUtcFromStream = endUtc;
            return endUtc;
        }

        return _recordingStartUtc is { } recordingStart ? recordingStart.AddSeconds(frame.EndSeconds) : _clock();
    }
}
