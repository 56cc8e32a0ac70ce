namespace HumWatch.Core.Signals;

/// <summary>The fixed shape of one stream session: sample rate and channels. A change of either starts a new session.</summary>
public sealed class StreamLayout
{
    public StreamLayout(double sampleRateHz, IReadOnlyList<ChannelInfo> channels)
    {
        ArgumentNullException.ThrowIfNull(channels);
        if (!double.IsFinite(sampleRateHz) || sampleRateHz <= 0)
        {
            throw new ArgumentOutOfRangeException(nameof(sampleRateHz), sampleRateHz, "Sample rate must be a positive, finite number of Hz.");
        }

        if (channels.Count == 0)
        {
            throw new ArgumentOutOfRangeException(nameof(channels), "A stream needs at least one channel.");
        }

        SampleRateHz = sampleRateHz;
        Channels = channels;
    }

    /// <summary>Samples per second per channel.</summary>
    public double SampleRateHz { get; }

    /// <summary>Channels in the order samples arrive.</summary>
    public IReadOnlyList<ChannelInfo> Channels { get; }

    public int ChannelCount => Channels.Count;

    /// <summary>True when both layouts have the same rate and the same channel labels in the same order.</summary>
    public bool IsSameShape(StreamLayout other)
    {
        ArgumentNullException.ThrowIfNull(other);
        if (ReferenceEquals(other, this))
        {
            // The common case: every chunk of a stream carries the stream's own layout.
            return true;
        }

        if (other.SampleRateHz != SampleRateHz || other.ChannelCount != ChannelCount)
        {
            return false;
        }

        for (var i = 0; i < ChannelCount; i++)
        {
            if (!string.Equals(Channels[i].Label, other.Channels[i].Label, StringComparison.Ordinal))
            {
                return false;
            }
        }

        return true;
    }
}
