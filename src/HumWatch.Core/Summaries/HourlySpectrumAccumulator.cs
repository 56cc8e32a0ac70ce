using HumWatch.Core.Analysis;
using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;

namespace HumWatch.Core.Summaries;

/// <summary>Frequency sum and frame count of one line key within a spectrum part (additive across parts).</summary>
public readonly record struct LineFrequencyTally(double SumHz, int Frames);

/// <summary>
/// Part of one UTC hour's mean spectrum of one stream session. Parts are additive: the hour's mean is the
/// seconds-weighted mean of its parts. (stream, session, sequence) identifies a part so a re-delivery counts once.
/// </summary>
/// <param name="StreamId">Stream.</param>
/// <param name="SessionId">Session (same meaning as in the minute ledger).</param>
/// <param name="Sequence">Running number within the session, from 1.</param>
/// <param name="HourUtc">Start of the UTC hour.</param>
/// <param name="BinWidthHz">Bin spacing, Hz.</param>
/// <param name="Seconds">Analysed time covered, s.</param>
/// <param name="MeanPsdUv2PerHz">Mean PSD over that time, µV²/Hz.</param>
/// <param name="Lines">Frequency sums of the lines at or above the ledger level, by ledger key.</param>
public sealed record SpectrumPart(
    string StreamId,
    string SessionId,
    long Sequence,
    DateTimeOffset HourUtc,
    double BinWidthHz,
    double Seconds,
    float[] MeanPsdUv2PerHz,
    IReadOnlyDictionary<FindingKey, LineFrequencyTally> Lines);

/// <summary>Receives completed spectrum parts.</summary>
public interface ISpectrumPartSink
{
    void OnSpectrumPart(SpectrumPart part);
}

/// <summary>
/// Accumulates a stream session's frames into hourly mean spectra for the daily summary plot. Feed it the same frames
/// as the minute ledger (<see cref="Observe"/> from the session's frame handler, <see cref="Flush"/> at its end).
/// A part is emitted when the UTC hour changes and at least every <c>flushEverySeconds</c> of stream time, so a
/// kill loses at most that much spectrum. Pure and not thread-safe; steady state allocates only when a part is emitted.
/// </summary>
/// <param name="streamId">Stream.</param>
/// <param name="sessionId">Session id; use the ledger's.</param>
/// <param name="minAmplitudeUvRms">Lines at or above this amplitude are marked, µV RMS. The default is 1 µV (the ledger's level).</param>
/// <param name="flushEverySeconds">Most stream time held before a part is emitted, s; 10 to 3600. The default is 300 s.</param>
/// <remarks>Only lines the <see cref="Tracking.LineTracker"/> found persistent are marked, as for the ledger and alerts.</remarks>
public sealed class HourlySpectrumAccumulator(string streamId, string sessionId, double minAmplitudeUvRms = 1.0, double flushEverySeconds = 300)
{
    // First initialisers, so bad arguments throw before anything else is set up.
    private readonly double _minAmplitudeUvRms = SessionArguments.CheckedLevel(streamId, sessionId, minAmplitudeUvRms);
    private readonly double _flushEverySeconds = flushEverySeconds is >= 10 and <= 3600
        ? flushEverySeconds
        : throw new ArgumentOutOfRangeException(nameof(flushEverySeconds), flushEverySeconds, "Must be between 10 and 3600 s.");
    private readonly Dictionary<FindingKey, LineFrequencyTally> _lines = [];
    private double[] _sum = [];
    private double _binWidthHz;
    private double _seconds;
    private double _lastEndSeconds = double.NegativeInfinity;
    private long _openHourTicks = long.MinValue;
    private long _sequence;

    /// <summary>Feeds one frame; may emit the part it moves past.</summary>
    /// <param name="frame">The analyser's frame (nothing of it is kept).</param>
    /// <param name="frameEndUtc">UTC time of the frame's last sample.</param>
    /// <param name="sink">Receives completed parts.</param>
    public void Observe(AnalysisFrame frame, DateTimeOffset frameEndUtc, ISpectrumPartSink sink)
    {
        ArgumentNullException.ThrowIfNull(frame);
        ArgumentNullException.ThrowIfNull(sink);

        // Only stream time not covered by the previous frame is new, as in the minute ledger.
        var newSeconds = frame.EndSeconds - Math.Max(frame.StartSeconds, _lastEndSeconds);
        if (!(newSeconds > 0) || frame.AnalysedChannelCount == 0)
        {
            _lastEndSeconds = Math.Max(_lastEndSeconds, frame.EndSeconds);
            return;
        }

        _lastEndSeconds = frame.EndSeconds;
        var psd = frame.MeanPsdUv2PerHz;
        var ticks = frameEndUtc.UtcTicks;
        var hourTicks = ticks - (ticks % TimeSpan.TicksPerHour);
        if (hourTicks != _openHourTicks || psd.Length != _sum.Length || frame.BinWidthHz != _binWidthHz || _seconds >= _flushEverySeconds)
        {
            Emit(sink);
            if (psd.Length != _sum.Length)
            {
                _sum = new double[psd.Length];
            }

            _binWidthHz = frame.BinWidthHz;
            _openHourTicks = hourTicks;
        }

        var sum = _sum;
        for (var k = 0; k < psd.Length; k++)
        {
            sum[k] += psd[k] * newSeconds;
        }

        _seconds += newSeconds;
        var lines = frame.Lines;
        for (var i = 0; i < lines.Length; i++)
        {
            var line = lines[i];
            if (!(line.AmplitudeUvRms >= _minAmplitudeUvRms) || !line.IsPersistent)
            {
                continue;
            }

            var key = FindingKey.ForLine(line.Source, line.FrequencyHz, frame.BinWidthHz);

            var tally = _lines.GetValueOrDefault(key);
            _lines[key] = new LineFrequencyTally(tally.SumHz + line.FrequencyHz, tally.Frames + 1);
        }
    }

    /// <summary>Emits the open part (end of stream or shutdown).</summary>
    public void Flush(ISpectrumPartSink sink)
    {
        ArgumentNullException.ThrowIfNull(sink);
        Emit(sink);
    }

    private void Emit(ISpectrumPartSink sink)
    {
        if (_openHourTicks == long.MinValue || !(_seconds > 0))
        {
            return;
        }

        var mean = new float[_sum.Length];
        for (var k = 0; k < mean.Length; k++)
        {
            mean[k] = (float)(_sum[k] / _seconds);
        }

        var lines = new Dictionary<FindingKey, LineFrequencyTally>(_lines);
        sink.OnSpectrumPart(new SpectrumPart(streamId, sessionId, ++_sequence, new DateTimeOffset(_openHourTicks, TimeSpan.Zero), _binWidthHz, _seconds, mean, lines));
        Array.Clear(_sum);
        _lines.Clear();
        _seconds = 0;
        _openHourTicks = long.MinValue;
    }
}
