using MathNet.Numerics.IntegralTransforms;

namespace HumWatch.Core.Spectra;

/// <summary>
/// Periodogram kernel on MathNet.Numerics' packed real FFT (<see cref="Fourier.ForwardReal(double[], int, FourierOptions)"/>),
/// any segment length. Our own work (detrend, window, scaling) allocates nothing; MathNet 5.0.0 itself allocates
/// scratch per transform (measured: ≈208 kB for N = 2000 and ≈108 kB for N = 1000/1001 (Bluestein), ≈42 kB for N = 2048),
/// which is why this sits behind <see cref="PeriodogramKernels.Create"/> for a faster kernel to replace.
/// </summary>
internal sealed class MathNetPeriodogramKernel : IPeriodogramKernel
{
    // NoScaling: forward transform unscaled (plain DFT sum). MathNet's default would scale by 1/√N; scipy's density
    // scale 1/(fs·Σw²) assumes the unscaled DFT, so we apply all scaling ourselves.
    private const FourierOptions Options = FourierOptions.NoScaling;

    private readonly double[] _window;
    private readonly double[] _fft;
    private readonly double _densityScale;

    /// <summary>Creates a kernel for segments of <paramref name="segmentLength"/> samples (≥ 2) at <paramref name="sampleRateHz"/> (> 0).</summary>
    public MathNetPeriodogramKernel(int segmentLength, double sampleRateHz)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(segmentLength, 2);
        if (!(sampleRateHz > 0) || !double.IsFinite(sampleRateHz))
        {
            throw new ArgumentOutOfRangeException(nameof(sampleRateHz), sampleRateHz, "Sample rate must be a positive finite number of Hz.");
        }

        SegmentLength = segmentLength;
        BinCount = (segmentLength / 2) + 1;
        _window = new double[segmentLength];
        HannWindow.FillPeriodic(_window);
        double sumSquares = 0;
        for (var i = 0; i < segmentLength; i++)
        {
            sumSquares += _window[i] * _window[i];
        }

        _densityScale = 1.0 / (sampleRateHz * sumSquares);

        // Packed real-complex layout: N + 2 values for even N, N + 1 for odd N (bins 0 … N/2 as re, im pairs).
        _fft = new double[(segmentLength & 1) == 0 ? segmentLength + 2 : segmentLength + 1];
    }

    /// <inheritdoc/>
    public int SegmentLength { get; }

    /// <inheritdoc/>
    public int BinCount { get; }

    /// <inheritdoc/>
    public void Compute(ReadOnlySpan<double> samples, int channelCount, int sampleStride, Span<double> periodograms)
    {
        if (!PeriodogramArguments.Check(SegmentLength, BinCount, samples, channelCount, sampleStride, periodograms))
        {
            return;
        }

        var n = SegmentLength;
        var bins = BinCount;

        var window = _window;
        var fft = _fft;
        var scale = _densityScale;
        var doubled = 2 * scale;

        // Every bin is doubled except DC and, for even N, the Nyquist bin.
        var lastDoubled = (n & 1) == 0 ? bins - 2 : bins - 1;
        for (var c = 0; c < channelCount; c++)
        {
            var segment = samples.Slice(c * sampleStride, n);
            double sum = 0;
            for (var i = 0; i < n; i++)
            {
                sum += segment[i];
            }

            var mean = sum / n;
            for (var i = 0; i < n; i++)
            {
                fft[i] = (segment[i] - mean) * window[i];
            }

            Fourier.ForwardReal(fft, n, Options);

            var output = periodograms.Slice(c * bins, bins);
            output[0] = ((fft[0] * fft[0]) + (fft[1] * fft[1])) * scale;
            for (var k = 1; k <= lastDoubled; k++)
            {
                var re = fft[2 * k];
                var im = fft[(2 * k) + 1];
                output[k] = ((re * re) + (im * im)) * doubled;
            }

            if (lastDoubled == bins - 2)
            {
                var re = fft[2 * (bins - 1)];
                var im = fft[(2 * (bins - 1)) + 1];
                output[bins - 1] = ((re * re) + (im * im)) * scale;
            }
        }
    }
}
