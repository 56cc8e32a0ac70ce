namespace HumWatch.Core.Spectra;

/// <summary>Hann window tables and their figures of merit (Harris 1978, Proc. IEEE 66(1)).</summary>
internal static class HannWindow
{
    /// <summary>
    /// Fills <paramref name="window"/> with the periodic (DFT-even) Hann window w[n] = 0.5 − 0.5·cos(2πn/N), N = length —
    /// scipy's get_window('hann', N) default, the one whose ENBW is exactly 1.5 bins.
    /// </summary>
    public static void FillPeriodic(Span<double> window)
    {
        var n = window.Length;
        for (var i = 0; i < n; i++)
        {
            window[i] = 0.5 - (0.5 * Math.Cos(2 * Math.PI * i / n));
        }
    }

    /// <summary>Fills <paramref name="window"/> with the symmetric Hann window w[n] = 0.5 − 0.5·cos(2πn/(N−1)) (filter design; both ends 0).</summary>
    public static void FillSymmetric(Span<double> window)
    {
        var n = window.Length;
        if (n == 1)
        {
            window[0] = 1;
            return;
        }

        for (var i = 0; i < n; i++)
        {
            window[i] = 0.5 - (0.5 * Math.Cos(2 * Math.PI * i / (n - 1)));
        }
    }

    /// <summary>Equivalent noise bandwidth in bins, N·Σw²/(Σw)² (Harris 1978, eq. 11).</summary>
    public static double EnbwBins(ReadOnlySpan<double> window)
    {
        double sum = 0;
        double sumSquares = 0;
        for (var i = 0; i < window.Length; i++)
        {
            sum += window[i];
            sumSquares += window[i] * window[i];
        }

        return window.Length * sumSquares / (sum * sum);
    }

    /// <summary>Coherent gain Σw/N (0.5 for Hann).</summary>
    public static double CoherentGain(ReadOnlySpan<double> window)
    {
        double sum = 0;
        for (var i = 0; i < window.Length; i++)
        {
            sum += window[i];
        }

        return sum / window.Length;
    }
}
