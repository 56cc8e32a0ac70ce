namespace HumWatch.Formats;

/// <summary>Voltage units accepted for analysed signals and their factor to µV.</summary>
internal static class VoltageUnits
{
    /// <summary>
    /// Factor that turns a value in <paramref name="unit"/> into µV: uV/µV → 1, mV → 1000, V → 1e6, nV → 1e-3
    /// (case-insensitive; µ as U+00B5, Greek mu U+03BC, or UTF-8 bytes read as Latin-1).
    /// </summary>
    public static bool TryGetFactorToUv(string unit, out double factor)
    {
        // A UTF-8 'µ' in a header read byte-per-char shows as "Âµ"; micro sign and Greek mu both mean micro.
        var u = unit.Trim().Replace("\u00C2\u00B5", "u", StringComparison.Ordinal)
            .Replace('\u00B5', 'u').Replace('\u03BC', 'u').ToUpperInvariant();

        switch (u)
        {
            case "UV":
            case "MICROV":
            case "MICROVOLT":
                factor = 1;
                return true;
            case "MV":
                factor = 1e3;
                return true;
            case "V":
                factor = 1e6;
                return true;
            case "NV":
                factor = 1e-3;
                return true;
            default:
                factor = double.NaN;
                return false;
        }
    }
}
