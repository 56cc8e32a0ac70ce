namespace HumWatch.Core.Spectra;

/// <summary>
/// One-shot Welch PSD equal to scipy.signal.welch(x, fs, window='hann', nperseg, noverlap, nfft=nperseg,
/// detrend='constant', scaling='density', average='mean'): one-sided density in input units² per Hz.
/// </summary>
public static class WelchPsd
{
    // Segments per kernel call in the one-shot path; bounds scratch to BatchSegments × bins values.
    private const int BatchSegments = 64;

    /// <summary>
    /// Writes the Welch PSD of <paramref name="x"/> into the first <c>segmentLength / 2 + 1</c> values of <paramref name="psd"/>
    /// and returns the number of segments averaged. Segments start every <c>segmentLength − overlapSamples</c> samples;
    /// a trailing partial segment is dropped. Allocates a kernel and scratch per call; use <see cref="SlidingWelch"/> for streams.
    /// </summary>
    public static int Compute(ReadOnlySpan<double> x, double sampleRateHz, int segmentLength, int overlapSamples, Span<double> psd)
    {
        if (!(sampleRateHz > 0) || !double.IsFinite(sampleRateHz))
        {
            throw new ArgumentOutOfRangeException(nameof(sampleRateHz), sampleRateHz, "Sample rate must be a positive finite number of Hz.");
        }

        if (segmentLength < 2 || segmentLength > x.Length)
        {
            throw new ArgumentOutOfRangeException(nameof(segmentLength), segmentLength, $"Segment length must be between 2 and the input length {x.Length}.");
        }

        var kernel = PeriodogramKernels.Create(segmentLength, sampleRateHz);
        return Compute(x, overlapSamples, psd, kernel);
    }

    /// <summary>As <see cref="Compute(ReadOnlySpan{double}, double, int, int, Span{double})"/> with a given kernel (its segment length and sample rate apply).</summary>
    internal static int Compute(ReadOnlySpan<double> x, int overlapSamples, Span<double> psd, IPeriodogramKernel kernel)
    {
        ArgumentNullException.ThrowIfNull(kernel);
        var segmentLength = kernel.SegmentLength;
        var bins = kernel.BinCount;
        if (segmentLength > x.Length)
        {
            throw new ArgumentException($"Input has {x.Length} samples, fewer than one segment of {segmentLength}.", nameof(x));
        }

        if (overlapSamples < 0 || overlapSamples >= segmentLength)
        {
            throw new ArgumentOutOfRangeException(nameof(overlapSamples), overlapSamples, $"Overlap must be between 0 and {segmentLength - 1} samples (segment length − 1).");
        }

        if (psd.Length < bins)
        {
            throw new ArgumentException($"Output needs {bins} bins (got {psd.Length}).", nameof(psd));
        }

        var step = segmentLength - overlapSamples;
        var segments = ((x.Length - segmentLength) / step) + 1;

        // Consecutive segments are the kernel's "channels" (segment k starts at k·step), taken in batches so memory
        // stays bounded for long inputs; rows are summed oldest first, then divided once, like a mean over all rows.
        var batch = Math.Min(segments, BatchSegments);
        var periodograms = new double[batch * bins];
        var sum = psd[..bins];
        sum.Clear();
        for (var first = 0; first < segments; first += batch)
        {
            var count = Math.Min(batch, segments - first);
            kernel.Compute(x[(first * step)..], count, step, periodograms);
            for (var r = 0; r < count; r++)
            {
                var row = periodograms.AsSpan(r * bins, bins);
                for (var k = 0; k < bins; k++)
                {
                    sum[k] += row[k];
                }
            }
        }

        for (var k = 0; k < bins; k++)
        {
            sum[k] /= segments;
        }

        return segments;
    }

    /// <summary>Centre frequency of one-sided bin <paramref name="bin"/> in Hz: bin·fs/segmentLength.</summary>
    public static double FrequencyOfBin(int bin, double sampleRateHz, int segmentLength)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(segmentLength, 1);
        if (bin < 0 || bin > segmentLength / 2)
        {
            throw new ArgumentOutOfRangeException(nameof(bin), bin, $"Bin must be between 0 and {segmentLength / 2} (segmentLength / 2).");
        }

        return bin * sampleRateHz / segmentLength;
    }

    /// <summary>Equivalent noise bandwidth in bins of the periodic Hann window of <paramref name="n"/> samples (≥ 2): N·Σw²/(Σw)², 1.5 exactly.</summary>
    public static double HannEnbwBins(int n)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(n, 2);
        var window = new double[n];
        HannWindow.FillPeriodic(window);
        return HannWindow.EnbwBins(window);
    }
}
