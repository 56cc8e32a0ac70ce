namespace HumWatch.Core.Lines;

/// <summary>
/// Merges one frame's per-channel peaks into lines: peaks of different channels within 1.5 bins of a cluster's lowest
/// frequency are one line (a tone's refined frequency scatters by well under a bin across channels). Fills pooled
/// <see cref="FrameLine"/>s, strongest (median amplitude) first. Fixed-size; no allocation per frame. Not thread-safe.
/// </summary>
/// <remarks>
/// Evidence dating: for each segment of the span, the line's excess power in the worst channels' own single
/// periodograms (peak bin ±2 minus that segment's local floor) is compared with the floor's power over the same 5 bins.
/// A single periodogram is χ²₂-distributed, far noisier than the K-segment mean, so the test is looser than the line
/// threshold: the segment shows the line when the excess is at least twice the floor power (≈ 5 dB, summed over up to
/// three channels: a noise-only segment passes with probability ≈ 1 %) and at least a quarter of the strongest
/// segment's excess. The quarter is the power of a tone present in half a Hann-windowed segment ((Σ_on w / Σ w)² = ¼),
/// so the evidence starts at most one segment step before a switch-on and ends at most one step after a switch-off.
/// When no segment qualifies, the whole span is the evidence.
/// <para>False-alarm probability: the smallest per-bin probability among the line's channels, Šidák-corrected for the
/// bins searched per channel × analysed channels (<see cref="LineSignificance"/>).</para>
/// </remarks>
internal sealed class LineCombiner
{
    private const double ClusterWidthBins = 1.5;
    private const double SegmentExcessOverFloor = 2.0;
    private const double SegmentShareOfStrongest = 0.25;

    private readonly int _channelCount;
    private readonly int _peakStride;
    private readonly double _binWidthHz;
    private readonly int _flankBins;
    private readonly int _searchedBinsPerChannel;
    private readonly double _singleSegmentFloorCorrection;
    private readonly Entry[] _entries;
    private readonly Cluster[] _clusters;
    private readonly int[] _bestEntry;
    private readonly int[] _stamp;
    private readonly double[] _amplitudes;
    private readonly double[] _segmentExcess;
    private readonly double[] _segmentFloorPower;
    private readonly double[] _floorScratch;
    private readonly FrameLine[] _pool;
    private int _stampCounter;

    /// <param name="channelCount">Channels of the stream.</param>
    /// <param name="peakStride">Peak slots per channel in the flat peak array (the finder's capacity).</param>
    /// <param name="binWidthHz">Bin spacing, Hz.</param>
    /// <param name="flankBins">Flanking bins per side for single-segment floors (as the finder uses).</param>
    /// <param name="maxSegments">Most segments a span holds.</param>
    /// <param name="maxLines">Pool size: the most lines a frame reports.</param>
    /// <param name="searchedBinsPerChannel">Bins the finder searches per channel (<see cref="LineFinder.SearchedBinCount"/>), for the false-alarm correction.</param>
    public LineCombiner(int channelCount, int peakStride, double binWidthHz, int flankBins, int maxSegments, int maxLines, int searchedBinsPerChannel)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(searchedBinsPerChannel, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(channelCount, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(peakStride, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(flankBins, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(maxSegments, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(maxLines, 1);
        if (!(binWidthHz > 0))
        {
            throw new ArgumentOutOfRangeException(nameof(binWidthHz), binWidthHz, "Bin width must be a positive number of Hz.");
        }

        _channelCount = channelCount;
        _peakStride = peakStride;
        _binWidthHz = binWidthHz;
        _flankBins = flankBins;
        _searchedBinsPerChannel = searchedBinsPerChannel;
        _singleSegmentFloorCorrection = 1 / WelchStatistics.MedianOfScaledChiSquare(2);
        var total = channelCount * peakStride;
        _entries = new Entry[total];
        _clusters = new Cluster[total];
        _bestEntry = new int[channelCount];
        _stamp = new int[channelCount];
        _amplitudes = new double[channelCount];
        _segmentExcess = new double[maxSegments];
        _segmentFloorPower = new double[maxSegments];
        _floorScratch = new double[2 * flankBins];
        _pool = new FrameLine[maxLines];
        for (var i = 0; i < maxLines; i++)
        {
            _pool[i] = new FrameLine(channelCount);
        }
    }

    /// <summary>The pooled lines; the first <c>count</c> returned by <see cref="Combine"/> are valid.</summary>
    public FrameLine[] Lines => _pool;

    /// <summary>
    /// Combines the peaks of <paramref name="analysedChannelCount"/> analysed channels. Channel c's peaks are
    /// <c>peaks[c·stride .. c·stride + counts[c])</c>; channels not analysed must have count 0. Returns the line count.
    /// </summary>
    public int Combine(ReadOnlySpan<ChannelPeak> peaks, ReadOnlySpan<int> counts, int analysedChannelCount, ISpanSegments? segments, long spanStartSampleIndex, long spanEndSampleIndex)
    {
        if (counts.Length != _channelCount || peaks.Length < _channelCount * _peakStride)
        {
            throw new ArgumentException($"Expected {_channelCount} channel counts and {_channelCount * _peakStride} peak slots.", nameof(counts));
        }

        var n = 0;
        for (var c = 0; c < _channelCount; c++)
        {
            var count = Math.Min(counts[c], _peakStride);
            for (var i = 0; i < count; i++)
            {
                var index = (c * _peakStride) + i;
                _entries[n++] = new Entry(peaks[index].FrequencyHz, c, index);
            }
        }

        if (n == 0 || analysedChannelCount <= 0)
        {
            return 0;
        }

        var entries = _entries.AsSpan(0, n);
        NoAllocSort.Sort(entries, default(ByFrequency));

        // Clusters of consecutive entries; each channel counts once per cluster (its strongest peak).
        var clusterCount = 0;
        var start = 0;
        while (start < n)
        {
            var end = start + 1;
            var limit = entries[start].FrequencyHz + (ClusterWidthBins * _binWidthHz);
            while (end < n && entries[end].FrequencyHz <= limit)
            {
                end++;
            }

            // Stamps keep rising across frames so the per-channel marks never need clearing.
            var stamp = ++_stampCounter;
            var affected = 0;
            for (var i = start; i < end; i++)
            {
                var channel = entries[i].Channel;
                if (_stamp[channel] != stamp)
                {
                    _stamp[channel] = stamp;
                    _bestEntry[channel] = i;
                    affected++;
                }
                else if (peaks[entries[i].PeakIndex].AmplitudeUvRms > peaks[entries[_bestEntry[channel]].PeakIndex].AmplitudeUvRms)
                {
                    entries[_bestEntry[channel]] = entries[_bestEntry[channel]] with { Channel = -1 };
                    _bestEntry[channel] = i;
                }
                else
                {
                    entries[i] = entries[i] with { Channel = -1 };
                }
            }

            var amplitudes = _amplitudes.AsSpan(0, affected);
            var a = 0;
            for (var i = start; i < end; i++)
            {
                if (entries[i].Channel >= 0)
                {
                    amplitudes[a++] = peaks[entries[i].PeakIndex].AmplitudeUvRms;
                }
            }

            amplitudes.Sort();
            var median = (affected & 1) == 1 ? amplitudes[affected / 2] : 0.5 * (amplitudes[(affected / 2) - 1] + amplitudes[affected / 2]);
            _clusters[clusterCount++] = new Cluster(start, end, median, amplitudes[affected - 1], affected);
            start = end;
        }

        var clusters = _clusters.AsSpan(0, clusterCount);
        NoAllocSort.Sort(clusters, default(ByStrength));
        var lineCount = Math.Min(clusterCount, _pool.Length);
        for (var l = 0; l < lineCount; l++)
        {
            Fill(_pool[l], clusters[l], entries, peaks, analysedChannelCount, segments, spanStartSampleIndex, spanEndSampleIndex);
        }

        return lineCount;
    }

    private void Fill(FrameLine line, Cluster cluster, ReadOnlySpan<Entry> entries, ReadOnlySpan<ChannelPeak> peaks, int analysed, ISpanSegments? segments, long spanStart, long spanEnd)
    {
        line.ClearChannelsAndSources();
        var weighted = 0.0;
        var weights = 0.0;
        var prominence = double.NegativeInfinity;
        var binProbability = double.PositiveInfinity;
        for (var i = cluster.Start; i < cluster.End; i++)
        {
            var entry = entries[i];
            if (entry.Channel < 0)
            {
                continue;
            }

            var peak = peaks[entry.PeakIndex];
            weighted += peak.FrequencyHz * peak.AmplitudeUvRms;
            weights += peak.AmplitudeUvRms;
            prominence = Math.Max(prominence, peak.ProminenceDb);
            if (peak.BinFalseAlarmProbability < binProbability)
            {
                binProbability = peak.BinFalseAlarmProbability;
            }

            line.OfferWorstChannel(entry.Channel, peak.AmplitudeUvRms);
            line.MarkChannel(entry.Channel);
        }

        line.FrequencyHz = weights > 0 ? weighted / weights : entries[cluster.Start].FrequencyHz;
        line.AmplitudeUvRms = cluster.MedianAmplitudeUvRms;
        line.MaxAmplitudeUvRms = cluster.MaxAmplitudeUvRms;
        line.ProminenceDb = prominence;
        line.FalseAlarmProbability = double.IsFinite(binProbability)
            ? LineSignificance.Sidak(binProbability, (double)_searchedBinsPerChannel * analysed)
            : double.NaN;
        line.AffectedChannelCount = cluster.Affected;
        line.ChannelShare = Math.Min(1.0, (double)cluster.Affected / analysed);
        line.EvidenceStartSampleIndex = spanStart;
        line.EvidenceEndSampleIndex = spanEnd;
        if (segments is not null)
        {
            DateEvidence(line, cluster, entries, peaks, segments);
        }
    }

    private void DateEvidence(FrameLine line, Cluster cluster, ReadOnlySpan<Entry> entries, ReadOnlySpan<ChannelPeak> peaks, ISpanSegments segments)
    {
        var k = Math.Min(segments.SegmentCount, _segmentExcess.Length);
        _segmentExcess.AsSpan(0, k).Clear();
        _segmentFloorPower.AsSpan(0, k).Clear();
        var worst = line.WorstChannels;
        for (var w = 0; w < worst.Length; w++)
        {
            var bin = BinOf(worst[w], cluster, entries, peaks);
            for (var s = 0; s < k; s++)
            {
                var periodogram = segments.Periodogram(worst[w], s);
                var median = LocalFloor.Median(periodogram, bin, LineFinder.GuardBins, _flankBins, 2, 6, _floorScratch);
                if (!(median >= 0))
                {
                    continue;
                }

                var floor = median * _singleSegmentFloorCorrection;
                var from = Math.Max(1, bin - LineFinder.MainLobeBins);
                var to = Math.Min(periodogram.Length - 1, bin + LineFinder.MainLobeBins);
                for (var j = from; j <= to; j++)
                {
                    _segmentExcess[s] += periodogram[j] - floor;
                }

                _segmentFloorPower[s] += (to - from + 1) * floor;
            }
        }

        var strongest = 0.0;
        for (var s = 0; s < k; s++)
        {
            strongest = Math.Max(strongest, _segmentExcess[s]);
        }

        var first = -1;
        var last = -1;
        for (var s = 0; s < k; s++)
        {
            if (_segmentExcess[s] >= SegmentExcessOverFloor * _segmentFloorPower[s] && _segmentExcess[s] >= SegmentShareOfStrongest * strongest && _segmentExcess[s] > 0)
            {
                if (first < 0)
                {
                    first = s;
                }

                last = s;
            }
        }

        if (first >= 0)
        {
            line.EvidenceStartSampleIndex = segments.SegmentStartSampleIndex(first);
            line.EvidenceEndSampleIndex = segments.SegmentStartSampleIndex(last) + segments.SegmentLength;
        }
    }

    private static int BinOf(int channel, Cluster cluster, ReadOnlySpan<Entry> entries, ReadOnlySpan<ChannelPeak> peaks)
    {
        for (var i = cluster.Start; i < cluster.End; i++)
        {
            if (entries[i].Channel == channel)
            {
                return peaks[entries[i].PeakIndex].Bin;
            }
        }

        return peaks[entries[cluster.Start].PeakIndex].Bin;
    }

    private readonly record struct Entry(double FrequencyHz, int Channel, int PeakIndex);

    private readonly record struct Cluster(int Start, int End, double MedianAmplitudeUvRms, double MaxAmplitudeUvRms, int Affected);

    private readonly struct ByFrequency : IComparer<Entry>
    {
        public int Compare(Entry x, Entry y) => x.FrequencyHz.CompareTo(y.FrequencyHz);
    }

    private readonly struct ByStrength : IComparer<Cluster>
    {
        public int Compare(Cluster x, Cluster y)
        {
            var byMedian = y.MedianAmplitudeUvRms.CompareTo(x.MedianAmplitudeUvRms);
            return byMedian != 0 ? byMedian : y.MaxAmplitudeUvRms.CompareTo(x.MaxAmplitudeUvRms);
        }
    }
}
