using System.Globalization;

namespace HumWatch.Host.Serialization;

/// <summary>
/// The one rounding of every number HumWatch reports: `check` reports, alert evidence and published messages round
/// each quantity the same way (docs/messages.md lists it per field). Rounding is half away from zero.
/// </summary>
internal static class Reported
{
    /// <summary>Frequencies, 3 decimals (1 mHz: well below the line finder's resolution, above float noise).</summary>
    public static double Hz(double value) => Decimals(value, 3);

    /// <summary>Spreads of a frequency (evidence), 4 decimals: a grid's wander is a few hundredths of a hertz.</summary>
    public static double SpreadHz(double value) => Decimals(value, 4);

    /// <summary>Amplitudes, µV RMS, 3 decimals.</summary>
    public static double UvRms(double value) => Decimals(value, 3);

    /// <summary>Prominence over the floor, dB, 1 decimal.</summary>
    public static double Db(double value) => Decimals(value, 1);

    /// <summary>Times and lengths of findings and lags, s, 1 decimal (frames are 2 s apart).</summary>
    public static double Seconds(double value) => Decimals(value, 1);

    /// <summary>Positions on a recording's sample clock (a file's length, stream time), s, 3 decimals (1 ms).</summary>
    public static double ClockSeconds(double value) => Decimals(value, 3);

    /// <summary>Shares 0..1 (channel share), 3 decimals.</summary>
    public static double Share(double value) => Decimals(value, 3);

    /// <summary>Ratios and overlaps of evidence, 2 decimals.</summary>
    public static double Ratio(double value) => Decimals(value, 2);

    /// <summary>Probabilities span hundreds of decades: 3 significant digits, not decimals; null when unknown (NaN).</summary>
    public static double? Probability(double value)
    {
        if (double.IsNaN(value))
        {
            return null;
        }

        return value <= 0 ? 0 : double.Parse(value.ToString("G3", CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);
    }

    /// <summary>Null for NaN and infinities (JSON has no such numbers), else the value.</summary>
    public static double? Finite(double value) => double.IsFinite(value) ? value : null;

    private static double Decimals(double value, int digits) => Math.Round(value, digits, MidpointRounding.AwayFromZero);
}
