namespace HumWatch.Core.Lines;

/// <summary>
/// Second look at a channel's peaks through the span's single-segment periodograms: a steady tone shows in every
/// segment at the same sub-bin frequency, a χ² fluctuation of a strong rhythm (alpha, beta) does not. Fixed-size, no
/// allocation per call. Not thread-safe.
/// </summary>
/// <remarks>
/// With K = 3 segments a Welch bin has only ν ≈ 5.8 degrees of freedom, and an amplitude-modulated rhythm has fewer
/// still (one strong segment dominates the mean), so its random spikes reach 10 dB over the local floor far more often
/// than χ²₅.₈ suggests (≈ 1e-3 per candidate in simulation). A spike is mostly one segment's doing; a line is in all of
/// them. A segment confirms a peak when, within ±1 bin of the peak, its own periodogram has a maximum at least 4 times
/// the mean of its bins 3…5 away (a power ratio of 10·log10 4 ≈ 6.02 dB) and that maximum's parabolic (log) frequency lies within 0.3 bins (plus a relative
/// drift of 5e-4 for a wandering grid's harmonics) of the averaged estimate. For K ≤ 3 every segment must confirm, for larger K all but one. A steady 10 dB line passes a segment with
/// probability ≈ 0.95; a rhythm's spike passes one of the other segments with ≈ 0.2.
/// </remarks>
internal sealed class SegmentConsistency
{
    // Power ratio over the near level a segment's maximum needs: 4 = 10·log10(4) ≈ 6.02 dB.
    private const double MinSegmentRatio = 4.0;
    private const double MaxFrequencyMismatchBins = 0.3;
    private const double RelativeDrift = 5e-4;
    private const int NearInnerBins = 3;
    private const int NearOuterBins = 5;

    private readonly double _binWidthHz;

    public SegmentConsistency(double binWidthHz)
    {
        if (!(binWidthHz > 0))
        {
            throw new ArgumentOutOfRangeException(nameof(binWidthHz), binWidthHz, "Bin width must be a positive number of Hz.");
        }

        _binWidthHz = binWidthHz;
    }

    /// <summary>Keeps, in order, the peaks of <paramref name="channel"/> that every segment confirms; returns how many remain.</summary>
    public int Filter(Span<ChannelPeak> peaks, int count, ISpanSegments segments, int channel)
    {
        var k = segments.SegmentCount;
        if (k < 2)
        {
            return count;
        }

        var required = k <= 3 ? k : k - 1;
        var kept = 0;
        for (var i = 0; i < count; i++)
        {
            var peak = peaks[i];
            var confirmed = 0;
            for (var s = 0; s < k && confirmed + (k - s) >= required; s++)
            {
                if (Confirms(segments.Periodogram(channel, s), peak))
                {
                    confirmed++;
                }
            }

            if (confirmed >= required)
            {
                peaks[kept++] = peak;
            }
        }

        return kept;
    }

    private bool Confirms(ReadOnlySpan<double> periodogram, ChannelPeak peak)
    {
        var last = periodogram.Length - 1;
        var best = -1;
        for (var j = Math.Max(1, peak.Bin - 1); j <= Math.Min(last, peak.Bin + 1); j++)
        {
            if (best < 0 || periodogram[j] > periodogram[best])
            {
                best = j;
            }
        }

        var p = periodogram[best];
        if (!(p > 0) || best <= 1 || best >= last)
        {
            return best >= 0 && best >= last && p > 0;
        }

        var near = 0.0;
        var n = 0;
        for (var d = NearInnerBins; d <= NearOuterBins; d++)
        {
            if (best - d >= 1)
            {
                near += periodogram[best - d];
                n++;
            }

            if (best + d <= last)
            {
                near += periodogram[best + d];
                n++;
            }
        }

        if (n == 0 || p < MinSegmentRatio * (near / n))
        {
            return false;
        }

        var left = Math.Log(Math.Max(periodogram[best - 1], 1e-12 * p));
        var centre = Math.Log(p);
        var right = Math.Log(Math.Max(periodogram[best + 1], 1e-12 * p));
        var curvature = left - (2 * centre) + right;
        var offset = curvature < 0 ? Math.Clamp(0.5 * (left - right) / curvature, -1, 1) : 0;
        // A grid's slow wander moves harmonic h by h times as much: allow a relative drift of 5e-4 between segments
        // (±0.025 Hz at 50 Hz, ±0.125 Hz at 250 Hz) on top of the estimator's own scatter.
        var expectedBin = peak.FrequencyHz / _binWidthHz;
        return Math.Abs(best + offset - expectedBin) <= MaxFrequencyMismatchBins + (RelativeDrift * expectedBin);
    }
}
