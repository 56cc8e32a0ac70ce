using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Ledger;
using HumWatch.Core.Reporting;
using HumWatch.Core.Signals;
using HumWatch.Core.Summaries;
using HumWatch.Formats;
using Microsoft.Extensions.Options;

namespace HumWatch.Host.Monitoring;

/// <summary>
/// Makes the sessions of the live stream monitors and of the folder inbox from one set of options and outputs: alert
/// events go to the alert sink, minute rows straight to the ledger writer, hourly spectra to the spectrum sink.
/// Holds no session state, so one instance serves every stream.
/// </summary>
internal sealed class StreamSessionFactory
{
    /// <param name="rowSink">Where completed minute rows go; in the service the store's <see cref="Store.LedgerWriter"/>.</param>
    /// <param name="spectrumSink">Where hourly mean spectra go for the daily summary plots; null keeps none.</param>
    /// <param name="liveFrames">Sees every frame after tracking (the live page's latest spectrum); null for none.</param>
    /// <param name="sightings">Notes which streams this instance watched, for the store's stream owners; null keeps none.</param>
    public StreamSessionFactory(
        AnalysisOptions analysis,
        IOptions<AlertOptions> alerts,
        IOptions<MonitorOptions> monitor,
        IAlertEventSink alertSink,
        IMinuteRowSink rowSink,
        TimeProvider time,
        ISpectrumPartSink? spectrumSink = null,
        ILiveFrameSink? liveFrames = null,
        Fleet.StreamSightings? sightings = null)
    {
        ArgumentNullException.ThrowIfNull(analysis);
        ArgumentNullException.ThrowIfNull(alerts);
        ArgumentNullException.ThrowIfNull(monitor);
        ArgumentNullException.ThrowIfNull(alertSink);
        ArgumentNullException.ThrowIfNull(rowSink);
        ArgumentNullException.ThrowIfNull(time);
        Analysis = analysis;
        Alerts = alerts.Value;
        Monitor = monitor.Value;
        AlertSink = alertSink;
        RowSink = rowSink;
        Time = time;
        SpectrumSink = spectrumSink;
        LiveFrames = liveFrames;
        Sightings = sightings;
    }

    /// <summary>How frames are made; whoever reads samples builds its analyser from these.</summary>
    public AnalysisOptions Analysis { get; }

    public AlertOptions Alerts { get; }

    public MonitorOptions Monitor { get; }

    public TimeProvider Time { get; }

    internal IAlertEventSink AlertSink { get; }

    internal IMinuteRowSink RowSink { get; }

    internal ISpectrumPartSink? SpectrumSink { get; }

    internal ILiveFrameSink? LiveFrames { get; }

    internal Fleet.StreamSightings? Sightings { get; }

    /// <summary>
    /// A session of a live stream, id "{stream}@{UTC ticks now}". Frames are placed in time by their chunks' times, or
    /// by the clock when the chunks carry none.
    /// </summary>
    public StreamSession CreateLive(string streamId, StreamLayout layout)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(streamId);
        var sessionId = $"{streamId}@{Time.GetUtcNow().UtcTicks}";
        return new StreamSession(this, streamId, sessionId, layout, recordingStartUtc: null, report: null);
    }

    /// <summary>
    /// The session of one signal group of a dropped file. Its id "file:{sha256}:{group}" repeats for the same content, so
    /// a re-run is not counted twice; the first group keeps the stream's name and each further rate is its own stream
    /// "{stream}.{rate}hz". Frames are placed in time from <paramref name="recordingStartUtc"/> (the file's sample 0).
    /// </summary>
    /// <param name="report">The check report's accumulator for this group; the session hands it every frame first.</param>
    /// <param name="alertSink">Where this session's alert events go instead of the factory's sink (a re-checked file's filter); null for the usual.</param>
    public StreamSession CreateForFileGroup(string streamId, string sha256, SignalGroup group, DateTimeOffset recordingStartUtc, RecordingAccumulator? report, IAlertEventSink? alertSink = null)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(streamId);
        ArgumentException.ThrowIfNullOrWhiteSpace(sha256);
        ArgumentNullException.ThrowIfNull(group);
        var groupStream = GroupStreamId(streamId, group);
        return new StreamSession(this, groupStream, $"file:{sha256}:{group.Index}", group.Layout, recordingStartUtc, report, alertSink);
    }

    /// <summary>Stream name of a file's signal group: the stream itself for the first group, "{stream}.{rate}hz" for the others.</summary>
    internal static string GroupStreamId(string streamId, SignalGroup group) =>
        group.Index == 0 ? streamId : FormattableString.Invariant($"{streamId}.{group.Layout.SampleRateHz:0}hz");
}
