using HumWatch.Core.Lines;
using Xunit;

namespace HumWatch.Core.Tests.Lines;

public sealed class LineCombinerTests
{
    private const double BinHz = 0.25;
    private const int Stride = 4;

    [Fact]
    public void Peaks_within_a_bin_across_channels_become_one_line_with_share_median_and_worst_channels()
    {
        var combiner = new LineCombiner(5, Stride, BinHz, 8, 3, 16, 1000);
        var peaks = new ChannelPeak[5 * Stride];
        var counts = new int[5];
        Put(peaks, counts, 0, 50.00, 2.0);
        Put(peaks, counts, 1, 50.05, 4.0);
        Put(peaks, counts, 2, 49.98, 1.0);
        Put(peaks, counts, 3, 50.02, 8.0);
        Put(peaks, counts, 3, 77.00, 0.5);

        var count = combiner.Combine(peaks, counts, 4, null, 1000, 5000);

        Assert.Equal(2, count);
        var line = combiner.Lines[0];
        Assert.Equal(4, line.AffectedChannelCount);
        Assert.Equal(1.0, line.ChannelShare);
        Assert.Equal(3.0, line.AmplitudeUvRms, 9); // median of 1, 2, 4, 8
        Assert.Equal(8.0, line.MaxAmplitudeUvRms, 9);
        Assert.Equal([3, 1, 0], line.WorstChannels.ToArray());
        Assert.Equal(((50.00 * 2) + (50.05 * 4) + (49.98 * 1) + (50.02 * 8)) / 15, line.FrequencyHz, 9);
        Assert.Equal(1000, line.EvidenceStartSampleIndex);
        Assert.Equal(5000, line.EvidenceEndSampleIndex);
        Assert.Equal(0.25, combiner.Lines[1].ChannelShare);
        Assert.Equal(77.0, combiner.Lines[1].FrequencyHz, 9);
    }

    [Fact]
    public void A_line_takes_its_most_significant_channel_corrected_for_every_bin_and_channel_searched()
    {
        // 1000 bins searched in each of 4 analysed channels: M = 4000 tests; Šidák 1967: 1 − (1 − p)^M.
        var combiner = new LineCombiner(5, Stride, BinHz, 8, 3, 16, 1000);
        var peaks = new ChannelPeak[5 * Stride];
        var counts = new int[5];
        Put(peaks, counts, 0, 50.00, 2.0, 1e-6);
        Put(peaks, counts, 1, 50.02, 4.0, 3e-9);
        Put(peaks, counts, 2, 49.99, 1.0, 2e-4);
        Put(peaks, counts, 3, 77.00, 0.5, double.NaN);

        var count = combiner.Combine(peaks, counts, 4, null, 0, 4000);

        Assert.Equal(2, count);
        // Binomial expansion 1 − (1 − p)^M = Mp − C(M,2)p² + C(M,3)p³ − … (Math.Pow(1 − p, M) itself would lose
        // 1e-8 of the result to the rounding of 1 − p).
        const double p = 3e-9, m = 4000;
        var expected = (m * p) - (m * (m - 1) / 2 * p * p) + (m * (m - 1) * (m - 2) / 6 * p * p * p);
        Assert.Equal(expected, combiner.Lines[0].FalseAlarmProbability, 1e-18);
        Assert.True(double.IsNaN(combiner.Lines[1].FalseAlarmProbability));
    }

    [Fact]
    public void Peaks_two_bins_apart_stay_separate_lines()
    {
        var combiner = new LineCombiner(2, Stride, BinHz, 8, 3, 16, 1000);
        var peaks = new ChannelPeak[2 * Stride];
        var counts = new int[2];
        Put(peaks, counts, 0, 59.94, 3.0);
        Put(peaks, counts, 1, 60.50, 2.0);

        Assert.Equal(2, combiner.Combine(peaks, counts, 2, null, 0, 4000));
    }

    [Fact]
    public void Evidence_covers_only_the_segments_whose_own_periodogram_shows_the_line()
    {
        const int bins = 1001;
        var segments = new FakeSegments(bins, 3, 2000, 1000, 10_000);
        var line = 200; // bin of 50 Hz
        segments.AddTone(0, 1, line, 50);
        segments.AddTone(0, 2, line, 50);
        var combiner = new LineCombiner(1, Stride, BinHz, 8, 3, 16, 1000);
        var peaks = new ChannelPeak[Stride];
        var counts = new int[1];
        peaks[0] = new ChannelPeak(line, 50, 3, 20, 1);
        counts[0] = 1;

        combiner.Combine(peaks, counts, 1, segments, 10_000, 14_000);

        Assert.Equal(11_000, combiner.Lines[0].EvidenceStartSampleIndex);
        Assert.Equal(14_000, combiner.Lines[0].EvidenceEndSampleIndex);
    }

    [Fact]
    public void Combine_with_evidence_dating_allocates_nothing()
    {
        var segments = new FakeSegments(1001, 3, 2000, 1000, 0, cacheRows: true);
        segments.AddTone(0, 1, 200, 50);
        var combiner = new LineCombiner(3, Stride, BinHz, 8, 3, 16, 1000);
        var peaks = new ChannelPeak[3 * Stride];
        var counts = new int[3];
        for (var c = 0; c < 3; c++)
        {
            Put(peaks, counts, c, 50 + (0.01 * c), 1 + c);
            Put(peaks, counts, c, 100 + (0.01 * c), 2 + c);
            Put(peaks, counts, c, 150, 3);
        }

        combiner.Combine(peaks, counts, 3, segments, 0, 4000);
        var before = GC.GetAllocatedBytesForCurrentThread();
        combiner.Combine(peaks, counts, 3, segments, 0, 4000);

        Assert.Equal(0, GC.GetAllocatedBytesForCurrentThread() - before);
    }

    private static void Put(ChannelPeak[] peaks, int[] counts, int channel, double frequencyHz, double amplitude, double binProbability = 1e-5)
    {
        var bin = (int)Math.Round(frequencyHz / BinHz);
        peaks[(channel * Stride) + counts[channel]++] = new ChannelPeak(bin, frequencyHz, amplitude, 15, 0.1, binProbability);
    }

    private sealed class FakeSegments : ISpanSegments
    {
        private readonly double[][,] _periodograms;
        private readonly int _step;
        private readonly long _start;

        private readonly double[][] _rows;

        public FakeSegments(int bins, int segments, int length, int step, long start, bool cacheRows = false)
        {
            _cacheRows = cacheRows;
            _rows = new double[segments][];
            SegmentCount = segments;
            SegmentLength = length;
            _step = step;
            _start = start;
            _periodograms = [new double[segments, bins]];
            var random = new Random(5);
            for (var s = 0; s < segments; s++)
            {
                for (var b = 0; b < bins; b++)
                {
                    _periodograms[0][s, b] = -Math.Log(1 - random.NextDouble()); // χ²₂/2 noise of mean 1
                }
            }
        }

        public int SegmentCount { get; }

        public int SegmentLength { get; }

        public void AddTone(int channel, int segment, int bin, double height)
        {
            _periodograms[channel][segment, bin] += height;
            _periodograms[channel][segment, bin - 1] += height / 4;
            _periodograms[channel][segment, bin + 1] += height / 4;
        }

        private readonly bool _cacheRows;

        public ReadOnlySpan<double> Periodogram(int channel, int segment)
        {
            // Every channel shares channel 0's spectra beyond the ones the fake holds.
            channel = Math.Min(channel, _periodograms.Length - 1);
            var bins = _periodograms[channel].GetLength(1);
            if (_cacheRows && _rows[segment] is { } cached)
            {
                return cached;
            }

            var row = new double[bins];
            _rows[segment] = row;
            for (var b = 0; b < bins; b++)
            {
                row[b] = _periodograms[channel][segment, b];
            }

            return row;
        }

        public long SegmentStartSampleIndex(int segment) => _start + ((long)segment * _step);
    }
}
