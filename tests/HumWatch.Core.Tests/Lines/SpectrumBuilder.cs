using HumWatch.Core.Spectra;

namespace HumWatch.Core.Tests.Lines;

/// <summary>Test spectra: exact periodograms of tones by direct DFT sums, and Welch PSDs of sampled signals.</summary>
internal static class SpectrumBuilder
{
    /// <summary>
    /// One-sided density periodogram (periodic Hann, scipy.signal.welch scaling 2/(fs·Σw²)) of A_peak·sin(2πft + φ)
    /// over one segment, computed by a direct DFT sum — no FFT and no project code.
    /// </summary>
    public static double[] TonePeriodogram(int segmentLength, double sampleRateHz, double frequencyHz, double amplitudeUvRms, double phase = 0.3)
    {
        var bins = (segmentLength / 2) + 1;
        var window = new double[segmentLength];
        var energy = 0.0;
        var x = new double[segmentLength];
        var mean = 0.0;
        for (var n = 0; n < segmentLength; n++)
        {
            window[n] = 0.5 - (0.5 * Math.Cos(2 * Math.PI * n / segmentLength));
            energy += window[n] * window[n];
            x[n] = Math.Sqrt(2) * amplitudeUvRms * Math.Sin((2 * Math.PI * frequencyHz * n / sampleRateHz) + phase);
            mean += x[n];
        }

        mean /= segmentLength;
        var psd = new double[bins];
        for (var m = 0; m < bins; m++)
        {
            double re = 0, im = 0;
            for (var n = 0; n < segmentLength; n++)
            {
                var v = window[n] * (x[n] - mean);
                var angle = -2 * Math.PI * m * n / segmentLength;
                re += v * Math.Cos(angle);
                im += v * Math.Sin(angle);
            }

            var scale = (m == 0 || (segmentLength % 2 == 0 && m == bins - 1)) ? 1.0 : 2.0;
            psd[m] = scale * ((re * re) + (im * im)) / (sampleRateHz * energy);
        }

        return psd;
    }

    /// <summary>Welch PSD (scipy-equal one-shot) of <paramref name="x"/> with 50 % overlap.</summary>
    public static double[] Welch(double[] x, double sampleRateHz, int segmentLength)
    {
        var psd = new double[(segmentLength / 2) + 1];
        WelchPsd.Compute(x, sampleRateHz, segmentLength, segmentLength / 2, psd);
        return psd;
    }
}
