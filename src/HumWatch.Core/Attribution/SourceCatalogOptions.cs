using HumWatch.Core.Text;
namespace HumWatch.Core.Attribution;

/// <summary>The sources a site expects. Bound from config (see config/site-*.json).</summary>
public sealed class SourceCatalogOptions
{
    /// <summary>
    /// Nominal mains frequency, usually 50 or 60 Hz. The default, null, decides it from the data: the grid whose
    /// fundamental (within the tolerance) shows on most channels with its harmonics (<see cref="Tracking.LineTracker"/>).
    /// </summary>
    public double? MainsHz { get; set; }

    /// <summary>The grids a recording can be measured against when <see cref="MainsHz"/> is not set (common practice, no source).</summary>
    public static IReadOnlyList<double> WorldGridsHz { get; } = [50, 60];

    /// <summary>The nominal grids to consider, Hz: the configured one, or both of <see cref="WorldGridsHz"/>. A method, so no setting binds to it.</summary>
    public IReadOnlyList<double> CandidateGrids() => MainsHz is { } hz ? [hz] : WorldGridsHz;

    /// <summary>
    /// How far the grid may wander from nominal, percent. The default is 1 %: EN 50160's ±1 % band for
    /// synchronously connected 50 Hz systems (99.5 % of a year). For 60 Hz grids the same ±1 % (±0.6 Hz)
    /// is a generous superset of NERC's frequency trigger limits (Eastern 59.950/60.050 Hz, Western
    /// 59.856/60.144 Hz; from memory, no document cited). A harmonic's window widens in proportion to its order.
    /// </summary>
    public double MainsTolerancePercent { get; set; } = 1;

    /// <summary>Highest mains harmonic considered, folded below Nyquist when above it. The default is 10.</summary>
    public int MainsMaxHarmonic { get; set; } = 10;

    /// <summary>Display refresh rates in Hz. The default list covers VESA DMT and common panel rates.</summary>
    public List<double> DisplayRatesHz { get; set; } = [59.94, 60, 70, 72, 75, 85, 100, 120, 144, 165, 240];

    /// <summary>
    /// Match window for a display's fundamental, Hz. The default is 0.5 Hz: VESA DMT rates sit off the nominal
    /// value (60.317, 75.029, 84.997 Hz …), so whole-number catalogue entries need slack.
    /// </summary>
    public double DisplayToleranceHz { get; set; } = 0.5;

    /// <summary>Highest display harmonic considered. The default is 3.</summary>
    public int DisplayMaxHarmonic { get; set; } = 3;

    /// <summary>Extra tones the site declares.</summary>
    public List<SiteToneOptions> SiteTones { get; set; } = [];

    public IReadOnlyList<string> Validate(string? prefix = null)
    {
        var at = SettingPrefix.Of(prefix);
        var errors = new List<string>();
        if (MainsHz is { } mains && !(mains > 0 && mains < 1000))
        {
            errors.Add($"{at}MainsHz must be above 0 and below 1000 Hz, usually 50 or 60 (got {MainsHz}).");
        }

        if (!(MainsTolerancePercent > 0 && MainsTolerancePercent <= 15))
        {
            errors.Add($"{at}MainsTolerancePercent must be above 0 and at most 15 % (got {MainsTolerancePercent}).");
        }

        if (MainsMaxHarmonic is < 1 or > 100)
        {
            errors.Add($"{at}MainsMaxHarmonic must be between 1 and 100 (got {MainsMaxHarmonic}).");
        }

        for (var i = 0; i < DisplayRatesHz.Count; i++)
        {
            if (!(DisplayRatesHz[i] > 0 && DisplayRatesHz[i] < 10000))
            {
                errors.Add($"{at}DisplayRatesHz:{i} must be a positive rate below 10000 Hz (got {DisplayRatesHz[i]}).");
            }
        }

        if (!(DisplayToleranceHz > 0 && DisplayToleranceHz <= 5))
        {
            errors.Add($"{at}DisplayToleranceHz must be above 0 and at most 5 Hz (got {DisplayToleranceHz}).");
        }

        if (DisplayMaxHarmonic is < 1 or > 20)
        {
            errors.Add($"{at}DisplayMaxHarmonic must be between 1 and 20 (got {DisplayMaxHarmonic}).");
        }

        for (var i = 0; i < SiteTones.Count; i++)
        {
            errors.AddRange(SiteTones[i].Validate($"{at}SiteTones:{i}"));
        }

        return errors;
    }
}

/// <summary>A tone a site declares, e.g. a ventilation drive or a stimulator's carrier.</summary>
public sealed class SiteToneOptions
{
    /// <summary>Short name shown in reports, e.g. "pump room drive".</summary>
    public string Name { get; set; } = "";

    public double FrequencyHz { get; set; }

    /// <summary>Match window for the fundamental, Hz. The default is 0.3 Hz.</summary>
    public double ToleranceHz { get; set; } = 0.3;

    /// <summary>Highest harmonic considered. The default is 1 (fundamental only).</summary>
    public int MaxHarmonic { get; set; } = 1;

    public IReadOnlyList<string> Validate(string prefix)
    {
        var errors = new List<string>();
        if (string.IsNullOrWhiteSpace(Name))
        {
            errors.Add($"{prefix}:Name must name the tone.");
        }

        if (!(FrequencyHz > 0 && FrequencyHz < 100000))
        {
            errors.Add($"{prefix}:FrequencyHz must be a positive frequency (got {FrequencyHz}).");
        }

        if (!(ToleranceHz > 0 && ToleranceHz <= 10))
        {
            errors.Add($"{prefix}:ToleranceHz must be above 0 and at most 10 Hz (got {ToleranceHz}).");
        }

        if (MaxHarmonic is < 1 or > 50)
        {
            errors.Add($"{prefix}:MaxHarmonic must be between 1 and 50 (got {MaxHarmonic}).");
        }

        return errors;
    }
}
