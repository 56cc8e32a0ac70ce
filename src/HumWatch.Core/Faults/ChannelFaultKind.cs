namespace HumWatch.Core.Faults;

/// <summary>A channel-level recording problem seen in the time domain.</summary>
public enum ChannelFaultKind
{
    /// <summary>The channel barely moves around its usual level: disconnected electrode, dead input, or bridged to a neighbour.</summary>
    Flat,

    /// <summary>
    /// The channel saturates: samples sit at the declared limits, keep returning to one extreme value, or are pinned at
    /// a value far from the channel's usual level — an amplifier rail, often inside the declared range.
    /// </summary>
    Clipped,

    /// <summary>NaN or infinite samples arrived.</summary>
    NonFinite,
}
