namespace HumWatch.Core.Numerics;

/// <summary>
/// The median of a sample: the middle value of the sorted values for an odd count, the mean of the two middle values
/// for an even count. The one median of the code base for lists of figures (the ledger, the summaries, the check report).
/// </summary>
/// <remarks>
/// Empty input gives <see cref="double.NaN"/>, not an exception: every caller summarises figures of which there may
/// be none (a minute in which no frame showed the line, a recording without a mains estimate), and NaN is how the
/// pipeline already writes "no value" (<see cref="Ledger.MinuteRow"/>, stored as NULL); callers that publish a nullable
/// turn it into null at their edge. NumPy does the same (numpy.median of an empty array is nan, with a warning).
/// Values must not be NaN: they would sort first and shift the middle.
/// </remarks>
public static class Median
{
    /// <summary>Sorts <paramref name="values"/> in place and returns their median; NaN when empty. Allocation-free.</summary>
    public static double SortInPlace(Span<double> values)
    {
        if (values.IsEmpty)
        {
            return double.NaN;
        }

        values.Sort();
        var mid = values.Length / 2;
        return values.Length % 2 == 1 ? values[mid] : (values[mid - 1] + values[mid]) / 2;
    }

    /// <summary>The median of <paramref name="values"/>, leaving their order alone (sorts a copy); NaN when empty.</summary>
    public static double Of(ReadOnlySpan<double> values) => SortInPlace(values.ToArray());
}
