namespace HumWatch.Formats.Csv;

/// <summary>How the first column of a delimited text recording is read as time: by its header name and unit.</summary>
internal static class CsvTimeColumn
{
    /// <summary>Largest relative difference of one time step from the sample interval (0.1 %).</summary>
    public const double StepTolerance = 0.001;

    /// <summary>Seconds per unit for a time unit written after any column name ("Zeit (s)", "Время [мс]"), else null.</summary>
    public static double? TimeUnitFactor(string unit) => unit.ToUpperInvariant() switch
    {
        "S" or "SEC" or "SECS" or "SECONDS" or "С" or "СЕК" => 1.0,
        "MS" or "MSEC" or "МС" => 1e-3,
        _ => null,
    };

    /// <summary>Seconds per unit of the time column, or null when the column is not a time column.</summary>
    public static double? TimeFactor(string name, string? unit)
    {
        var n = name.ToUpperInvariant();
        if (unit is not null)
        {
            if (n is not ("TIME" or "T"))
            {
                return null;
            }

            return unit.ToUpperInvariant() switch
            {
                "S" or "SEC" or "SECONDS" => 1.0,
                "MS" => 1e-3,
                _ => null,
            };
        }

        return n switch
        {
            "TIME" or "T" or "TIME_S" or "TIME_SEC" or "SECONDS" or "SEC" or "S" => 1.0,
            "TIME_MS" or "MS" => 1e-3,
            _ => null,
        };
    }
}
