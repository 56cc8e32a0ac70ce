namespace HumWatch.Core.Faults;

/// <summary>Thresholds for channel faults.</summary>
public sealed class FaultOptions
{
    /// <summary>A channel whose standard deviation over a hop stays below this is flat, µV. The default is 0.1 µV (well under any amplifier's own noise).</summary>
    public double FlatStdDevUv { get; set; } = 0.1;

    /// <summary>A channel is clipped when at least this share of a hop's samples sit at the range limits. The default is 0.001 (0.1 %).</summary>
    public double ClippedFraction { get; set; } = 0.001;

    /// <summary>Without a known range, a sample at or beyond this magnitude counts as clipped, µV. The default is 0 (off).</summary>
    public double FallbackClipLevelUv { get; set; }

    public IReadOnlyList<string> Validate(string prefix = "Faults")
    {
        var errors = new List<string>();
        if (!(FlatStdDevUv >= 0))
        {
            errors.Add($"{prefix}:FlatStdDevUv must be zero or more µV (got {FlatStdDevUv}).");
        }

        if (!(ClippedFraction > 0 && ClippedFraction <= 1))
        {
            errors.Add($"{prefix}:ClippedFraction must be above 0 and at most 1 (got {ClippedFraction}).");
        }

        if (!(FallbackClipLevelUv >= 0))
        {
            errors.Add($"{prefix}:FallbackClipLevelUv must be zero (off) or a positive level in µV (got {FallbackClipLevelUv}).");
        }

        return errors;
    }
}
