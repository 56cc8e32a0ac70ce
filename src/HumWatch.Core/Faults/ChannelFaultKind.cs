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

/// <summary>Text forms of <see cref="ChannelFaultKind"/> used in keys, messages, reports and the store.</summary>
public static class ChannelFaultKindText
{
    /// <summary>"flat", "clipped" or "non-finite".</summary>
    public static string ToText(this ChannelFaultKind kind) => kind switch
    {
        ChannelFaultKind.Flat => "flat",
        ChannelFaultKind.Clipped => "clipped",
        _ => "non-finite",
    };

    /// <summary>Parses the text form; unknown text gives false.</summary>
    public static bool TryParse(ReadOnlySpan<char> text, out ChannelFaultKind kind)
    {
        if (text.SequenceEqual("flat"))
        {
            kind = ChannelFaultKind.Flat;
            return true;
        }

        if (text.SequenceEqual("clipped"))
        {
            kind = ChannelFaultKind.Clipped;
            return true;
        }

        kind = ChannelFaultKind.NonFinite;
        return text.SequenceEqual("non-finite");
    }
}
