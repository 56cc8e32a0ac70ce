namespace HumWatch.Core.Signals;

/// <summary>One analysed channel of a stream.</summary>
/// <param name="Label">Electrode or signal label as the source names it (e.g. "Fp1", "EEG Cz-Ref").</param>
/// <param name="RangeMinUv">Lowest value the acquisition chain can represent, in µV, when known (EDF physical minimum). Samples sitting here count as clipped.</param>
/// <param name="RangeMaxUv">Highest representable value in µV, when known.</param>
public sealed record ChannelInfo(string Label, double? RangeMinUv = null, double? RangeMaxUv = null);
