namespace HumWatch.Core.Summaries;

/// <summary>Rounding of summary figures, so the JSON does not carry floating-point noise and stays the same run to run.</summary>
internal static class SummaryRounding
{
    /// <summary>Rounds half away from zero; NaN and infinities stay as they are.</summary>
    public static double Round(double value, int digits) => double.IsFinite(value) ? Math.Round(value, digits, MidpointRounding.AwayFromZero) : value;

    /// <summary>Null and NaN both become null: the summary writes "no value" as null.</summary>
    public static double? RoundOrNull(double? value, int digits) => value is { } v && !double.IsNaN(v) ? Round(v, digits) : null;
}
