using HumWatch.Core.Attribution;

namespace HumWatch.Core.Lines;

/// <summary>
/// A line seen in one frame, combined across channels and attributed. Instances belong to a pool owned by
/// the analyser and are rewritten every frame: read them inside the frame callback and copy what you keep.
/// </summary>
public sealed class FrameLine
{
    /// <summary>How many worst channels a line keeps.</summary>
    public const int MaxWorstChannels = 3;

    /// <summary>How many alternative explanations a line keeps.</summary>
    public const int MaxAlternatives = 4;

    private readonly int[] _worstChannels = new int[MaxWorstChannels];
    private readonly double[] _worstAmplitudesUvRms = new double[MaxWorstChannels];
    private readonly SourceMatch[] _alternatives = new SourceMatch[MaxAlternatives];
    private ulong[] _channelMask;
    private int _worstCount;
    private int _alternativeCount;

    /// <summary>A line that records no channel set (tests, hand-built frames).</summary>
    public FrameLine()
        : this(0)
    {
    }

    /// <summary>A pooled line of a stream with <paramref name="channelCount"/> channels.</summary>
    internal FrameLine(int channelCount)
    {
        _channelMask = new ulong[(channelCount + 63) / 64];
    }

    /// <summary>Frequency in Hz: amplitude-weighted mean of the affected channels' refined frequencies.</summary>
    public double FrequencyHz { get; internal set; }

    /// <summary>Median amplitude over the affected channels, µV RMS.</summary>
    public double AmplitudeUvRms { get; internal set; }

    /// <summary>Largest amplitude of any affected channel, µV RMS.</summary>
    public double MaxAmplitudeUvRms { get; internal set; }

    /// <summary>Largest prominence over the local floor among the affected channels, dB.</summary>
    public double ProminenceDb { get; internal set; }

    /// <summary>
    /// Probability that Gaussian noise alone puts a peak standing this far above its floor anywhere in the frame's search:
    /// the strongest channel's per-bin probability (Snedecor's F for a Welch bin over its median floor), Šidák-corrected
    /// for the bins searched × analysed channels. 0..1; NaN when unknown. See <see cref="LineSignificance"/>.
    /// </summary>
    public double FalseAlarmProbability { get; internal set; } = double.NaN;

    /// <summary>Channels that carry the line.</summary>
    public int AffectedChannelCount { get; internal set; }

    /// <summary>Affected channels over analysed (non-flat, finite) channels, 0..1.</summary>
    public double ChannelShare { get; internal set; }

    /// <summary>
    /// Stream sample index where the evidence for the line starts within this frame: the start of the earliest
    /// Welch segment of the span whose own periodogram shows the line. Lets reports date an onset to one segment step.
    /// </summary>
    public long EvidenceStartSampleIndex { get; internal set; }

    /// <summary>One past the last sample of the latest segment of the span whose periodogram shows the line.</summary>
    public long EvidenceEndSampleIndex { get; internal set; }

    /// <summary>
    /// Identity of the line across frames, given by the <see cref="Tracking.LineTracker"/> (1, 2, …; 0 before tracking):
    /// the same number in consecutive frames is the same line for alerts, the ledger, the spectra and `check` alike.
    /// </summary>
    public int TrackId { get; internal set; }

    /// <summary>Frames in a row, this one included, in which the tracked line has been seen.</summary>
    public int TrackRunFrames { get; internal set; }

    /// <summary>
    /// True once the line has been seen in the tracker's PersistFrames frames in a row (a rhythm can look tonal for one
    /// span; mains or a display stays). Everything that counts lines counts only persistent ones.
    /// </summary>
    public bool IsPersistent { get; internal set; }

    /// <summary>What decided <see cref="Source"/> beyond the catalogue (frequency track, channel pattern).</summary>
    public Tracking.LineEvidence Evidence { get; internal set; } = Tracking.LineEvidence.None;

    /// <summary>Most likely explanation; <see cref="SourceMatch.None"/> when unidentified.</summary>
    public SourceMatch Source { get; internal set; } = SourceMatch.None;

    /// <summary>Channel indices with the largest amplitude, largest first.</summary>
    public ReadOnlySpan<int> WorstChannels => _worstChannels.AsSpan(0, _worstCount);

    /// <summary>Amplitudes of <see cref="WorstChannels"/>, same order, µV RMS.</summary>
    public ReadOnlySpan<double> WorstAmplitudesUvRms => _worstAmplitudesUvRms.AsSpan(0, _worstCount);

    /// <summary>Other catalogued sources that explain the same line within resolution.</summary>
    public ReadOnlySpan<SourceMatch> AlsoPossible => _alternatives.AsSpan(0, _alternativeCount);

    internal void ClearChannelsAndSources()
    {
        _worstCount = 0;
        Array.Clear(_channelMask);
        TrackId = 0;
        TrackRunFrames = 0;
        IsPersistent = false;
        Evidence = Tracking.LineEvidence.None;
        ClearSources();
    }

    /// <summary>True when channel <paramref name="channel"/> carries the line (false when no channel set is kept).</summary>
    public bool CarriesChannel(int channel) =>
        (uint)(channel >> 6) < (uint)_channelMask.Length && (_channelMask[channel >> 6] & (1UL << (channel & 63))) != 0;

    /// <summary>Bit c set when channel c carries the line; empty for lines that keep no channel set.</summary>
    internal ReadOnlySpan<ulong> ChannelMask => _channelMask;

    internal void MarkChannel(int channel)
    {
        if ((uint)(channel >> 6) < (uint)_channelMask.Length)
        {
            _channelMask[channel >> 6] |= 1UL << (channel & 63);
        }
    }

    internal void ClearSources()
    {
        _alternativeCount = 0;
        Source = SourceMatch.None;
    }

    /// <summary>Keeps the channel if it is among the <see cref="MaxWorstChannels"/> strongest so far.</summary>
    internal void OfferWorstChannel(int channel, double amplitudeUvRms)
    {
        var position = _worstCount;
        while (position > 0 && _worstAmplitudesUvRms[position - 1] < amplitudeUvRms)
        {
            position--;
        }

        if (position >= MaxWorstChannels)
        {
            return;
        }

        var last = Math.Min(_worstCount, MaxWorstChannels - 1);
        for (var i = last; i > position; i--)
        {
            _worstChannels[i] = _worstChannels[i - 1];
            _worstAmplitudesUvRms[i] = _worstAmplitudesUvRms[i - 1];
        }

        _worstChannels[position] = channel;
        _worstAmplitudesUvRms[position] = amplitudeUvRms;
        _worstCount = Math.Min(_worstCount + 1, MaxWorstChannels);
    }

    internal void ClearAlternatives() => _alternativeCount = 0;

    internal void AddAlternative(SourceMatch match)
    {
        if (_alternativeCount < MaxAlternatives)
        {
            _alternatives[_alternativeCount++] = match;
        }
    }

    /// <summary>Makes this line a copy of <paramref name="other"/>.</summary>
    internal void CopyFrom(FrameLine other)
    {
        FrequencyHz = other.FrequencyHz;
        AmplitudeUvRms = other.AmplitudeUvRms;
        MaxAmplitudeUvRms = other.MaxAmplitudeUvRms;
        ProminenceDb = other.ProminenceDb;
        FalseAlarmProbability = other.FalseAlarmProbability;
        AffectedChannelCount = other.AffectedChannelCount;
        ChannelShare = other.ChannelShare;
        EvidenceStartSampleIndex = other.EvidenceStartSampleIndex;
        EvidenceEndSampleIndex = other.EvidenceEndSampleIndex;
        Source = other.Source;
        TrackId = other.TrackId;
        TrackRunFrames = other.TrackRunFrames;
        IsPersistent = other.IsPersistent;
        Evidence = other.Evidence;
        if (_channelMask.Length != other._channelMask.Length)
        {
            _channelMask = new ulong[other._channelMask.Length];
        }

        other._channelMask.CopyTo(_channelMask, 0);
        other._worstChannels.CopyTo(_worstChannels, 0);
        other._worstAmplitudesUvRms.CopyTo(_worstAmplitudesUvRms, 0);
        other._alternatives.CopyTo(_alternatives, 0);
        _worstCount = other._worstCount;
        _alternativeCount = other._alternativeCount;
    }
}
