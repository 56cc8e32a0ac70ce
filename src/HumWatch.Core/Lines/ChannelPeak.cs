namespace HumWatch.Core.Lines;

/// <summary>A narrowband peak found in one channel's PSD.</summary>
/// <param name="Bin">Index of the PSD bin at the peak's maximum.</param>
/// <param name="FrequencyHz">Frequency refined between bins.</param>
/// <param name="AmplitudeUvRms">RMS of the sinusoid the peak stands for: PSD above the local floor integrated over the main lobe.</param>
/// <param name="ProminenceDb">Peak PSD over the local floor, in dB.</param>
/// <param name="FloorUv2PerHz">The robust local floor used, in µV²/Hz.</param>
/// <param name="BinFalseAlarmProbability">
/// Probability that a noise-only bin stands this far over its estimated floor (<see cref="LineSignificance"/>), before
/// any correction for the number of bins searched.
/// </param>
public readonly record struct ChannelPeak(int Bin, double FrequencyHz, double AmplitudeUvRms, double ProminenceDb, double FloorUv2PerHz, double BinFalseAlarmProbability = double.NaN);
