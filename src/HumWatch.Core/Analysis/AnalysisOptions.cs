using HumWatch.Core.Text;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Lines;
using HumWatch.Core.Spectra;

namespace HumWatch.Core.Analysis;

/// <summary>Everything the analysis of one stream needs; a pure function of samples and these settings.</summary>
public sealed class AnalysisOptions
{
    public SpectralOptions Spectra { get; set; } = new();

    public LineFinderOptions Lines { get; set; } = new();

    public SourceCatalogOptions Sources { get; set; } = new();

    public FaultOptions Faults { get; set; } = new();

    public Tracking.TrackingOptions Tracking { get; set; } = new();

    /// <summary>One message per problem, each naming the configuration key; empty when valid.</summary>
    public IReadOnlyList<string> Validate(string? prefix = null)
    {
        var at = SettingPrefix.Of(prefix);
        var errors = new List<string>();
        errors.AddRange(Spectra.Validate($"{at}Spectra"));
        errors.AddRange(Lines.Validate($"{at}Lines"));
        errors.AddRange(Sources.Validate($"{at}Sources"));
        errors.AddRange(Faults.Validate($"{at}Faults"));
        errors.AddRange(Tracking.Validate($"{at}Tracking"));
        return errors;
    }
}
