namespace HumWatch.Core.Reporting;

/// <summary>Plain-word explanations of terms every output uses, said once where a person reads them (docs/wording.md).</summary>
public static class PlainWords
{
    /// <summary>What "aliased" means: the harmonic lies above half the sampling rate (Nyquist) and shows at |f − m·fs|.</summary>
    public const string Aliased = "folded below half the sampling rate";
}
