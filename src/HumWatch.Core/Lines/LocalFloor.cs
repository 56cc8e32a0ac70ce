namespace HumWatch.Core.Lines;

/// <summary>Robust local PSD floor: median of flanking bands on both sides of a bin, excluding its main lobe.</summary>
internal static class LocalFloor
{
    /// <summary>
    /// Median of bins j with <paramref name="guardBins"/> &lt; |j − k| ≤ guardBins + flankBins and
    /// <paramref name="lowestBin"/> ≤ j &lt; psd.Length (one-sided near DC and Nyquist). Returns NaN when fewer
    /// than <paramref name="minimumBins"/> are available. <paramref name="scratch"/> must hold 2·flankBins values.
    /// </summary>
    public static double Median(ReadOnlySpan<double> psd, int k, int guardBins, int flankBins, int lowestBin, int minimumBins, Span<double> scratch)
    {
        var n = 0;
        var lowFrom = Math.Max(lowestBin, k - guardBins - flankBins);
        for (var j = lowFrom; j < k - guardBins; j++)
        {
            scratch[n++] = psd[j];
        }

        var highTo = Math.Min(psd.Length - 1, k + guardBins + flankBins);
        for (var j = k + guardBins + 1; j <= highTo; j++)
        {
            scratch[n++] = psd[j];
        }

        if (n < minimumBins)
        {
            return double.NaN;
        }

        var values = scratch[..n];
        var half = n / 2;
        var upper = Select(values, half);
        if ((n & 1) == 1)
        {
            return upper;
        }

        // Even count: the lower middle is the largest value left of the selected one.
        var lower = values[0];
        for (var i = 1; i < half; i++)
        {
            if (values[i] > lower)
            {
                lower = values[i];
            }
        }

        return 0.5 * (lower + upper);
    }

    // Hoare quickselect: after it, values[rank] holds the rank-th smallest, smaller ones left of it.
    private static double Select(Span<double> values, int rank)
    {
        var left = 0;
        var right = values.Length - 1;
        while (left < right)
        {
            var pivot = values[(left + right) >>> 1];
            var i = left;
            var j = right;
            while (i <= j)
            {
                while (values[i] < pivot)
                {
                    i++;
                }

                while (values[j] > pivot)
                {
                    j--;
                }

                if (i <= j)
                {
                    (values[i], values[j]) = (values[j], values[i]);
                    i++;
                    j--;
                }
            }

            if (rank <= j)
            {
                right = j;
            }
            else if (rank >= i)
            {
                left = i;
            }
            else
            {
                break;
            }
        }

        return values[rank];
    }
}
