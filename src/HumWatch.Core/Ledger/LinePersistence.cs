using HumWatch.Core.Findings;

namespace HumWatch.Core.Ledger;

/// <summary>
/// Counts, per finding key, how many frames in a row have shown it, so that bookkeeping can ignore a peak until it has
/// lasted as long as an alert needs (an alpha burst can look tonal for one span; mains or a display stays).
/// Allocates only when a new key appears. Not thread-safe.
/// </summary>
public sealed class LinePersistence
{
    private const int PruneAbove = 512;

    private readonly Dictionary<FindingKey, (long LastFrame, int Run)> _runs = [];
    private readonly List<FindingKey> _stale = [];

    /// <param name="minFrames">Frames in a row a key needs before it counts; 1 counts everything.</param>
    public LinePersistence(int minFrames)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(minFrames, 1);
        MinFrames = minFrames;
    }

    public int MinFrames { get; }

    /// <summary>Records that <paramref name="key"/> is present in frame <paramref name="frameNumber"/> (call once per key and frame).</summary>
    public void Seen(FindingKey key, long frameNumber)
    {
        var run = _runs.TryGetValue(key, out var previous) && previous.LastFrame == frameNumber - 1 ? previous.Run + 1 : 1;
        if (previous.LastFrame == frameNumber && previous.Run > 0)
        {
            return; // already counted this frame
        }

        _runs[key] = (frameNumber, run);
        if (_runs.Count > PruneAbove)
        {
            Prune(frameNumber);
        }
    }

    /// <summary>True when <paramref name="key"/> was seen in frame <paramref name="frameNumber"/> and the MinFrames before it, in a row.</summary>
    public bool IsPersistent(FindingKey key, long frameNumber) =>
        MinFrames == 1 || (_runs.TryGetValue(key, out var state) && state.LastFrame == frameNumber && state.Run >= MinFrames);

    private void Prune(long frameNumber)
    {
        _stale.Clear();
        foreach (var (key, state) in _runs)
        {
            if (state.LastFrame < frameNumber - 1)
            {
                _stale.Add(key);
            }
        }

        foreach (var key in _stale)
        {
            _runs.Remove(key);
        }
    }
}
