namespace HumWatch.Simulation;

/// <summary>
/// Second-order IIR section (direct form I), designed with R. Bristow-Johnson's "Audio EQ Cookbook" formulas.
/// One instance per channel: it keeps that channel's state.
/// </summary>
internal sealed class Biquad
{
    private readonly double _b0;
    private readonly double _b1;
    private readonly double _b2;
    private readonly double _a1;
    private readonly double _a2;
    private double _x1;
    private double _x2;
    private double _y1;
    private double _y2;

    private Biquad(double b0, double b1, double b2, double a0, double a1, double a2)
    {
        _b0 = b0 / a0;
        _b1 = b1 / a0;
        _b2 = b2 / a0;
        _a1 = a1 / a0;
        _a2 = a2 / a0;
    }

    /// <summary>Band-pass with 0 dB peak gain at <paramref name="centreHz"/> and the given −3 dB bandwidth.</summary>
    public static Biquad BandPass(double sampleRateHz, double centreHz, double bandwidthHz)
    {
        var w0 = 2 * Math.PI * ClampBelowNyquist(centreHz, sampleRateHz) / sampleRateHz;
        var q = centreHz / bandwidthHz;
        var alpha = Math.Sin(w0) / (2 * q);
        return new Biquad(alpha, 0, -alpha, 1 + alpha, -2 * Math.Cos(w0), 1 - alpha);
    }

    /// <summary>Butterworth (Q = 1/√2) low-pass.</summary>
    public static Biquad LowPass(double sampleRateHz, double cornerHz)
    {
        var w0 = 2 * Math.PI * ClampBelowNyquist(cornerHz, sampleRateHz) / sampleRateHz;
        var cos = Math.Cos(w0);
        var alpha = Math.Sin(w0) / Math.Sqrt(2);
        return new Biquad((1 - cos) / 2, 1 - cos, (1 - cos) / 2, 1 + alpha, -2 * cos, 1 - alpha);
    }

    /// <summary>Butterworth (Q = 1/√2) high-pass.</summary>
    public static Biquad HighPass(double sampleRateHz, double cornerHz)
    {
        var w0 = 2 * Math.PI * ClampBelowNyquist(cornerHz, sampleRateHz) / sampleRateHz;
        var cos = Math.Cos(w0);
        var alpha = Math.Sin(w0) / Math.Sqrt(2);
        return new Biquad((1 + cos) / 2, -(1 + cos), (1 + cos) / 2, 1 + alpha, -2 * cos, 1 - alpha);
    }

    /// <summary>
    /// First-order shelf (s + ωz)/(s + ωp) by the bilinear transform with pre-warping: −6 dB/octave between the pole
    /// and the zero, flat elsewhere. A geometric ladder of them approximates 1/f.
    /// </summary>
    public static Biquad Shelf(double sampleRateHz, double poleHz, double zeroHz)
    {
        var k = 2 * sampleRateHz;
        var wp = k * Math.Tan(Math.PI * ClampBelowNyquist(poleHz, sampleRateHz) / sampleRateHz);
        var wz = k * Math.Tan(Math.PI * ClampBelowNyquist(zeroHz, sampleRateHz) / sampleRateHz);
        return new Biquad(k + wz, wz - k, 0, k + wp, wp - k, 0);
    }

    public Biquad Clone() => new(_b0, _b1, _b2, 1, _a1, _a2);

    public double Process(double x)
    {
        var y = (_b0 * x) + (_b1 * _x1) + (_b2 * _x2) - (_a1 * _y1) - (_a2 * _y2);
        _x2 = _x1;
        _x1 = x;
        _y2 = _y1;
        _y1 = y;
        return y;
    }

    /// <summary>
    /// RMS of the cascade's output for unit-variance white input: √(Σ h[n]²) over the impulse response
    /// (run on fresh copies, long enough for the slowest pole to decay).
    /// </summary>
    public static double WhiteNoiseGain(IReadOnlyList<Biquad> cascade, int length)
    {
        var copies = new Biquad[cascade.Count];
        for (var i = 0; i < copies.Length; i++)
        {
            copies[i] = cascade[i].Clone();
        }

        var energy = 0.0;
        for (var n = 0; n < length; n++)
        {
            var v = n == 0 ? 1.0 : 0.0;
            for (var i = 0; i < copies.Length; i++)
            {
                v = copies[i].Process(v);
            }

            energy += v * v;
        }

        return Math.Sqrt(energy);
    }

    // Designs stay stable and meaningful only below Nyquist; a request above it is pinned just under.
    private static double ClampBelowNyquist(double hz, double sampleRateHz) => Math.Min(hz, 0.45 * sampleRateHz);
}
