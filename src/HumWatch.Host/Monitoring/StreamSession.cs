using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Ledger;
using HumWatch.Core.Signals;
using HumWatch.Core.Summaries;

namespace HumWatch.Host.Monitoring;

/// <summary>
/// One session of one stream: the analyser, the alert book and the minute ledger fed by the same frames. Used by the
/// live stream monitors and by the folder inbox (a file is a session of its stream). Not thread-safe.
/// </summary>
internal sealed class StreamSession : IAnalysisFrameSink, IMinuteRowSink
{
    private readonly StreamAnalyzer? _analyzer;
    private readonly AlertBook _alerts;
    private readonly MinuteLedger _ledger;
    private readonly HourlySpectrumAccumulator? _spectrum;
    private readonly ISpectrumPartSink? _spectrumSink;
    private readonly IAlertEventSink _alertSink;
    private readonly Func<DateTimeOffset> _clock;
    private readonly DateTimeOffset? _recordingStartUtc;
    private readonly List<MinuteRow> _rows = [];
    private double _lastEndSeconds;
    private DateTimeOffset _lastEndUtc;

    /// <param name="streamId">Stream the session belongs to.</param>
    /// <param name="sessionId">Ledger session id; repeat it for the same input (a file's hash) so a re-run is not counted twice.</param>
    /// <param name="layout">Rate and channels.</param>
    /// <param name="recordingStartUtc">UTC time of sample 0 when the source has no per-chunk times (files); null for live streams.</param>
    /// <param name="clock">Wall clock for frames whose chunks carry no time.</param>
    /// <param name="ownAnalyzer">False when someone else analyses and hands frames to <see cref="OnFrame"/> (the file checker).</param>
    /// <param name="spectrumSink">Where hourly mean spectra go for the daily summary plots; null keeps none.</param>
    public StreamSession(
        string streamId,
        string sessionId,
        StreamLayout layout,
        AnalysisOptions analysis,
        AlertOptions alerts,
        double ledgerMinAmplitudeUvRms,
        int ledgerMinLineFrames,
        IAlertEventSink alertSink,
        Func<DateTimeOffset> clock,
        DateTimeOffset? recordingStartUtc = null,
        bool ownAnalyzer = true,
        ISpectrumPartSink? spectrumSink = null)
    {
        StreamId = streamId;
        Layout = layout;
        _analyzer = ownAnalyzer ? new StreamAnalyzer(layout, analysis) : null;
        _alerts = new AlertBook(streamId, alerts);
        _ledger = new MinuteLedger(streamId, sessionId, ledgerMinAmplitudeUvRms, ledgerMinLineFrames);
        if (spectrumSink is not null)
        {
            _spectrum = new HourlySpectrumAccumulator(streamId, sessionId, ledgerMinAmplitudeUvRms, minLineFrames: ledgerMinLineFrames);
            _spectrumSink = spectrumSink;
        }

        _alertSink = alertSink;
        _clock = clock;
        _recordingStartUtc = recordingStartUtc;
        _lastEndUtc = recordingStartUtc ?? clock();
    }

    public string StreamId { get; }

    public StreamLayout Layout { get; }

    public long FramesAnalysed { get; private set; }

    public int LinesInLastFrame { get; private set; }

    public int ActiveAlertCount => _alerts.Active.Count;

    public long GapCount => _analyzer?.GapCount ?? 0;

    /// <summary>UTC time of the last analysed sample, when the stream supplies times; else null.</summary>
    public DateTimeOffset? LastFrameEndUtcFromStream { get; private set; }

    /// <summary>Feeds a chunk. Completed ledger minutes collect in <see cref="TakeRows"/>.</summary>
    public void Append(SampleChunk chunk)
    {
        if (_analyzer is null)
        {
            throw new InvalidOperationException("This session is fed frames, not chunks.");
        }

        _analyzer.Append(chunk, this);
    }

    /// <summary>Forgets the analysis span after a failure, so one bad moment cannot keep failing every later chunk.</summary>
    public void RestartAnalysis() => _analyzer?.Reset();

    /// <summary>Ends the session: open alerts clear with "stream ended" and the open ledger minute is closed.</summary>
    public void End()
    {
        _alerts.Flush(_lastEndSeconds, _lastEndUtc, _alertSink);
        _ledger.Flush(this);
        if (_spectrum is not null)
        {
            _spectrum.Flush(_spectrumSink!);
        }
    }

    /// <summary>Ledger rows completed since the last call.</summary>
    public IReadOnlyList<MinuteRow> TakeRows()
    {
        if (_rows.Count == 0)
        {
            return [];
        }

        var rows = _rows.ToArray();
        _rows.Clear();
        return rows;
    }

    public void OnFrame(AnalysisFrame frame)
    {
        var spanSeconds = (frame.EndSampleIndex - frame.StartSampleIndex) / frame.Layout.SampleRateHz;
        DateTimeOffset endUtc;
        if (frame.StartUtc is { } startUtc)
        {
            endUtc = startUtc.AddSeconds(spanSeconds);
            LastFrameEndUtcFromStream = endUtc;
        }
        else if (_recordingStartUtc is { } recordingStart)
        {
            endUtc = recordingStart.AddSeconds(frame.EndSeconds);
        }
        else
        {
            endUtc = _clock();
        }

        _lastEndSeconds = frame.EndSeconds;
        _lastEndUtc = endUtc;
        FramesAnalysed++;
        LinesInLastFrame = frame.Lines.Length;
        _alerts.Observe(frame, endUtc, _alertSink);
        _ledger.Observe(frame, endUtc, this);
        _spectrum?.Observe(frame, endUtc, _spectrumSink!);
    }

    public void OnMinuteRow(MinuteRow row) => _rows.Add(row);
}
