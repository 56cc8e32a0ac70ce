using System.Collections.Concurrent;
using HumWatch.Core.Signals;

namespace HumWatch.Formats.Wire;

/// <summary>
/// Keeps one <see cref="StreamLayout"/> instance per stream while its rate and channel labels stay the same,
/// so consumers can tell a new session by reference (a different instance means the shape changed). Thread-safe.
/// </summary>
public sealed class StreamLayoutCache
{
    /// <summary>Default cap on remembered streams (10 000); beyond it new streams get a fresh layout per chunk.</summary>
    public const int DefaultMaxStreams = 10_000;

    private readonly ConcurrentDictionary<string, StreamLayout> _layouts = new(StringComparer.Ordinal);
    private readonly int _maxStreams;

    /// <param name="maxStreams">Most streams remembered, 1 to 1 000 000; the default is 10 000.</param>
    public StreamLayoutCache(int maxStreams = DefaultMaxStreams)
    {
        if (maxStreams is < 1 or > 1_000_000)
        {
            throw new ArgumentOutOfRangeException(nameof(maxStreams), maxStreams, "Must be between 1 and 1 000 000.");
        }

        _maxStreams = maxStreams;
    }

    /// <summary>Number of streams currently remembered.</summary>
    public int Count => _layouts.Count;

    /// <summary>The current layout of a stream, if one was seen.</summary>
    public bool TryGet(string streamId, out StreamLayout? layout) => _layouts.TryGetValue(streamId, out layout);

    /// <summary>Forgets a stream, so its next chunk starts a new layout.</summary>
    public bool Remove(string streamId) => _layouts.TryRemove(streamId, out _);

    internal static bool HasShape(StreamLayout layout, double sampleRateHz, List<string> labels)
    {
        // Exact comparison on purpose: any change of the declared rate is a new session.
        if (layout.SampleRateHz != sampleRateHz || layout.ChannelCount != labels.Count)
        {
            return false;
        }

        for (var i = 0; i < labels.Count; i++)
        {
            if (!string.Equals(layout.Channels[i].Label, labels[i], StringComparison.Ordinal))
            {
                return false;
            }
        }

        return true;
    }

    internal StreamLayout? Find(string streamId, double sampleRateHz, List<string> labels) =>
        _layouts.TryGetValue(streamId, out var layout) && HasShape(layout, sampleRateHz, labels) ? layout : null;

    internal void Store(string streamId, StreamLayout layout)
    {
        if (_layouts.Count < _maxStreams || _layouts.ContainsKey(streamId))
        {
            _layouts[streamId] = layout;
        }
    }
}
