using HumWatch.Core.Text;
namespace HumWatch.Core.Faults;

/// <summary>Thresholds for channel faults.</summary>
public sealed class FaultOptions
{
    /// <summary>A channel whose standard deviation over a hop stays below this is still there (flat or pinned at a rail), µV. The default is 0.1 µV (well under any amplifier's own noise).</summary>
    public double FlatStdDevUv { get; set; } = 0.1;

    /// <summary>A channel is clipped when at least this share of a hop's samples sit at the declared range limits. The default is 0.001 (0.1 %).</summary>
    public double ClippedFraction { get; set; } = 0.001;

    /// <summary>Without a known range, a sample at or beyond this magnitude counts as clipped, µV. The default is 0 (off).</summary>
    public double FallbackClipLevelUv { get; set; }

    /// <summary>
    /// A still hop whose level lies at least this many standard deviations of the channel's moving samples (same span)
    /// from their mean is pinned at a rail (clipped), not flat; a channel still for the whole span is pinned when its
    /// level lies this far outside every moving channel's mean. The default is 8 (an EEG sample, even a held one,
    /// stays within about 4 to 5 of its standard deviations; an amplifier rail lies millivolts away).
    /// </summary>
    public double SaturationDistanceSd { get; set; } = 8;

    /// <summary>
    /// A pinned level must also lie at least this far from the usual level, µV (see <see cref="SaturationDistanceSd"/>):
    /// a quiet moving part (a near-dead input drifting by a few µV) gives no usable spread, and no amplifier saturates
    /// within an EEG excursion of its baseline. The default is 100 µV.
    /// </summary>
    public double SaturationMinDistanceUv { get; set; } = 100;

    /// <summary>
    /// A channel is clipped when its moving samples reach their span's highest (or lowest) value in at least this share
    /// of them, with at least <see cref="RepeatedExtremeMinSamples"/> samples: a continuous signal touches its extreme
    /// about once, a saturating one keeps returning to the same value. The default is 0.005 (0.5 %; simulated EEG
    /// quantised in 1 µV steps repeats its extreme in at most 0.2 % of an 8 s span).
    /// </summary>
    public double RepeatedExtremeFraction { get; set; } = 0.005;

    /// <summary>The fewest samples at one extreme value that count as repeated (see <see cref="RepeatedExtremeFraction"/>). The default is 8.</summary>
    public int RepeatedExtremeMinSamples { get; set; } = 8;

    /// <summary>
    /// The repeated-extreme test is skipped for a channel whose smallest step between consecutive samples is at least
    /// this many of its standard deviations: so coarse a converter fills its top level by quantisation alone (a
    /// near-flat input read in steps of its own noise). The default is 0.5.
    /// </summary>
    public double CoarseStepSd { get; set; } = 0.5;

    public IReadOnlyList<string> Validate(string? prefix = null)
    {
        var at = SettingPrefix.Of(prefix);
        var errors = new List<string>();
        if (!(FlatStdDevUv >= 0))
        {
            errors.Add($"{at}FlatStdDevUv must be zero or more µV (got {FlatStdDevUv}).");
        }

        if (!(ClippedFraction > 0 && ClippedFraction <= 1))
        {
            errors.Add($"{at}ClippedFraction must be above 0 and at most 1 (got {ClippedFraction}).");
        }

        if (!(FallbackClipLevelUv >= 0))
        {
            errors.Add($"{at}FallbackClipLevelUv must be zero (off) or a positive level in µV (got {FallbackClipLevelUv}).");
        }

        if (!(SaturationDistanceSd > 0) || !double.IsFinite(SaturationDistanceSd))
        {
            errors.Add($"{at}SaturationDistanceSd must be a positive number of standard deviations (got {SaturationDistanceSd}).");
        }

        if (!(SaturationMinDistanceUv >= 0) || !double.IsFinite(SaturationMinDistanceUv))
        {
            errors.Add($"{at}SaturationMinDistanceUv must be zero or a positive distance in µV (got {SaturationMinDistanceUv}).");
        }

        if (!(RepeatedExtremeFraction > 0 && RepeatedExtremeFraction <= 1))
        {
            errors.Add($"{at}RepeatedExtremeFraction must be above 0 and at most 1 (got {RepeatedExtremeFraction}).");
        }

        if (RepeatedExtremeMinSamples < 2)
        {
            errors.Add($"{at}RepeatedExtremeMinSamples must be at least 2, since any signal reaches its extreme once (got {RepeatedExtremeMinSamples}).");
        }

        if (!(CoarseStepSd > 0) || !double.IsFinite(CoarseStepSd))
        {
            errors.Add($"{at}CoarseStepSd must be a positive number of standard deviations (got {CoarseStepSd}).");
        }

        return errors;
    }
}
