namespace HumWatch.Formats.Wire;

/// <summary>The two frames of one wire message.</summary>
/// <param name="Header">Frame 1: UTF-8 JSON header.</param>
/// <param name="Samples">Frame 2: float32 little-endian samples, channel-major.</param>
public readonly record struct WireMessage(byte[] Header, byte[] Samples);
