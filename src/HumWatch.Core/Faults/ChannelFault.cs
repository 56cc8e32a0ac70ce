namespace HumWatch.Core.Faults;

/// <summary>A fault of one channel within one analysis span.</summary>
/// <param name="Channel">Channel index in the stream layout.</param>
/// <param name="Kind">What is wrong.</param>
/// <param name="Fraction">Share of the span's samples that show it (flat: share of flat hops, 1 when the whole span is flat; clipped: share at a limit, declared or found).</param>
public readonly record struct ChannelFault(int Channel, ChannelFaultKind Kind, double Fraction);
