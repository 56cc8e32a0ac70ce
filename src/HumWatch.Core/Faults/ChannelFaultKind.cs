namespace HumWatch.Core.Faults;

/// <summary>A channel-level recording problem seen in the time domain.</summary>
public enum ChannelFaultKind
{
    /// <summary>The channel barely moves: disconnected electrode or dead input.</summary>
    Flat,

    /// <summary>Samples sit at the representable limits: the amplifier or converter saturates.</summary>
    Clipped,

    /// <summary>NaN or infinite samples arrived.</summary>
    NonFinite,
}
