using System.Collections.Concurrent;
using HumWatch.Core.Analysis;
using HumWatch.Core.Attribution;
using HumWatch.Core.Findings;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Serialization;

namespace HumWatch.Host.Web;

/// <summary>
/// Each stream's latest spectrum (the frame's mean PSD over the analysed channels) and its persistent lines, copied
/// from the frames as they are analysed, for the room view. A stream's buffers are reused from frame to frame, so
/// the copy allocates nothing once a stream's first frame is in (a mean PSD is a few thousand bins at most).
/// </summary>
internal sealed class LiveSpectra(TimeProvider time) : ILiveFrameSink
{
    /// <summary>Most bins kept; a finer spectrum keeps the largest of each group of neighbouring bins, so no line is lost.</summary>
    public const int MaxBins = 4096;

    /// <summary>Most lines kept per spectrum, strongest first (the frame's order).</summary>
    public const int MaxLines = 32;

    private readonly ConcurrentDictionary<string, Slot> _slots = new(StringComparer.Ordinal);

    public void OnFrame(string streamId, AnalysisFrame frame, DateTimeOffset endUtc)
    {
        if (frame.AnalysedChannelCount == 0)
        {
            return;
        }

        var slot = _slots.GetOrAdd(streamId, static _ => new Slot());
        var now = time.GetTimestamp();
        lock (slot)
        {
            slot.CopiedAt = now;
            slot.EndUtc = endUtc;
            var psd = frame.MeanPsdUv2PerHz;
            var step = (psd.Length + MaxBins - 1) / MaxBins;
            var bins = (psd.Length + step - 1) / step;
            if (slot.Psd.Length != bins)
            {
                slot.Psd = new float[bins];
            }

            for (var b = 0; b < bins; b++)
            {
                var end = Math.Min(psd.Length, (b + 1) * step);
                var largest = psd[b * step];
                for (var k = (b * step) + 1; k < end; k++)
                {
                    largest = Math.Max(largest, psd[k]);
                }

                slot.Psd[b] = (float)largest;
            }

            slot.BinWidthHz = frame.BinWidthHz * step;
            slot.FrameBinWidthHz = frame.BinWidthHz;
            slot.LineCount = 0;
            var lines = frame.Lines;
            for (var i = 0; i < lines.Length && slot.LineCount < MaxLines; i++)
            {
                var line = lines[i];
                if (line.IsPersistent)
                {
                    slot.Lines[slot.LineCount++] = new LineMark(line.FrequencyHz, line.AmplitudeUvRms, line.ChannelShare, line.Source);
                }
            }
        }
    }

    /// <summary>The stream's latest spectrum, lines labelled and those with an active alert (by key) flagged; null when none was seen.</summary>
    public SpectrumView? Read(string streamId, IReadOnlySet<string> activeKeys)
    {
        if (!_slots.TryGetValue(streamId, out var slot))
        {
            return null;
        }

        lock (slot)
        {
            if (slot.CopiedAt is null)
            {
                return null;
            }

            var lines = new SpectrumLine[slot.LineCount];
            for (var i = 0; i < lines.Length; i++)
            {
                var mark = slot.Lines[i];
                // The key alerts give a line (an unidentified one by its frequency to 0.01 Hz).
                var key = FindingKey.ForLine(mark.Source, mark.FrequencyHz);
                var text = key.ToString();
                lines[i] = new SpectrumLine(
                    Reported.Hz(mark.FrequencyHz), Reported.Finite(Reported.UvRms(mark.AmplitudeUvRms)), Reported.Share(mark.ChannelShare),
                    text, key.Label, key.Category.ToText(), mark.Source.Kind == SourceKind.Unidentified ? null : mark.Source.Harmonic,
                    mark.Source.Aliased, IsFlagged(key, text, activeKeys, 2 * slot.FrameBinWidthHz));
            }

            return new SpectrumView(streamId, slot.EndUtc, slot.BinWidthHz, [.. slot.Psd], lines);
        }
    }

    /// <summary>
    /// Whether an active alert is about this line: the same key, or for an unidentified line an active unidentified
    /// alert within <paramref name="toleranceHz"/> (its key holds the frequency the alert's track had at the raise).
    /// </summary>
    private static bool IsFlagged(FindingKey key, string text, IReadOnlySet<string> activeKeys, double toleranceHz)
    {
        if (activeKeys.Contains(text))
        {
            return true;
        }

        if (key.Category != FindingCategory.Unidentified || key.FrequencyHz is not { } hz)
        {
            return false;
        }

        foreach (var active in activeKeys)
        {
            if (FindingKey.Parse(active) is { Category: FindingCategory.Unidentified, FrequencyHz: { } other } && Math.Abs(other - hz) <= toleranceHz)
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>Forgets streams not copied for <paramref name="age"/>.</summary>
    public void Prune(TimeSpan age)
    {
        foreach (var pair in _slots)
        {
            lock (pair.Value)
            {
                if (pair.Value.CopiedAt is { } at && time.GetElapsedTime(at) > age)
                {
                    _slots.TryRemove(pair);
                }
            }
        }
    }

    private readonly record struct LineMark(double FrequencyHz, double AmplitudeUvRms, double ChannelShare, SourceMatch Source);

    private sealed class Slot
    {
        public long? CopiedAt { get; set; }

        public DateTimeOffset EndUtc { get; set; }

        public float[] Psd { get; set; } = [];

        public double BinWidthHz { get; set; }

        public double FrameBinWidthHz { get; set; }

        public LineMark[] Lines { get; } = new LineMark[MaxLines];

        public int LineCount { get; set; }
    }
}

/// <summary>A room's latest spectrum: bin k at k × <see cref="BinWidthHz"/>, power density in µV²/Hz.</summary>
/// <param name="Stream">Stream id.</param>
/// <param name="Utc">UTC time of the frame's last sample.</param>
/// <param name="BinWidthHz">Bin spacing, Hz.</param>
/// <param name="PsdUv2PerHz">Mean power density over the analysed channels, µV²/Hz.</param>
/// <param name="Lines">The frame's persistent lines, strongest first.</param>
internal sealed record SpectrumView(string Stream, DateTimeOffset Utc, double BinWidthHz, float[] PsdUv2PerHz, IReadOnlyList<SpectrumLine> Lines);

/// <summary>A line of a spectrum, with the key and label its alert and day sheet use.</summary>
/// <param name="Flagged">True when the room has an active alert with this key.</param>
internal sealed record SpectrumLine(double FrequencyHz, double? AmplitudeUvRms, double ChannelShare, string Key, string Label, string Kind, int? Harmonic, bool Aliased, bool Flagged);
