using HumWatch.Core.Text;
namespace HumWatch.Core.Lines;

/// <summary>Settings of the narrowband peak search.</summary>
public sealed class LineFinderOptions
{
    /// <summary>Lowest frequency searched, Hz. The default is 1 Hz (below it the 1/f background dominates and drifts).</summary>
    public double MinFrequencyHz { get; set; } = 1;

    /// <summary>Highest frequency searched, Hz; clamped to just below Nyquist. The default (0) means up to Nyquist.</summary>
    public double MaxFrequencyHz { get; set; }

    /// <summary>A peak must stand this far above the robust local floor, dB. The default is 10 dB.</summary>
    public double MinProminenceDb { get; set; } = 10;

    /// <summary>Half-width of the flanking bands that estimate the local floor, Hz. The default is 2 Hz.</summary>
    public double FloorHalfWidthHz { get; set; } = 2;

    /// <summary>Smallest amplitude worth reporting, µV RMS. The default is 0.2 µV.</summary>
    public double MinAmplitudeUvRms { get; set; } = 0.2;

    /// <summary>Largest number of peaks kept per channel and frame (strongest first). The default is 32.</summary>
    public int MaxPeaksPerChannel { get; set; } = 32;

    public IReadOnlyList<string> Validate(string? prefix = null)
    {
        var at = SettingPrefix.Of(prefix);
        var errors = new List<string>();
        if (!(MinFrequencyHz >= 0))
        {
            errors.Add($"{at}MinFrequencyHz must be zero or more (got {MinFrequencyHz}).");
        }

        if (!(MaxFrequencyHz >= 0) || (MaxFrequencyHz > 0 && MaxFrequencyHz <= MinFrequencyHz))
        {
            errors.Add($"{at}MaxFrequencyHz must be 0 (up to Nyquist) or above MinFrequencyHz (got {MaxFrequencyHz}).");
        }

        if (!(MinProminenceDb >= 3 && MinProminenceDb <= 60))
        {
            errors.Add($"{at}MinProminenceDb must be between 3 and 60 dB (got {MinProminenceDb}).");
        }

        if (!(FloorHalfWidthHz > 0 && FloorHalfWidthHz <= 20))
        {
            errors.Add($"{at}FloorHalfWidthHz must be above 0 and at most 20 Hz (got {FloorHalfWidthHz}).");
        }

        if (!(MinAmplitudeUvRms >= 0))
        {
            errors.Add($"{at}MinAmplitudeUvRms must be zero or more (got {MinAmplitudeUvRms}).");
        }

        if (MaxPeaksPerChannel is < 1 or > 256)
        {
            errors.Add($"{at}MaxPeaksPerChannel must be between 1 and 256 (got {MaxPeaksPerChannel}).");
        }

        return errors;
    }
}
