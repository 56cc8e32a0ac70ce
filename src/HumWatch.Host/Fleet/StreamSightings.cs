namespace HumWatch.Host.Fleet;

/// <summary>
/// The streams this instance watched since the heartbeat last wrote them: per stream and UTC hour of its data, when
/// (wall clock) it was last seen. Stream sessions note every frame here — a dictionary entry, no store write — and the
/// heartbeat takes the lot once per beat into the store's stream owners. Thread-safe.
/// </summary>
internal sealed class StreamSightings(TimeProvider time)
{
    private readonly Lock _gate = new();
    private Dictionary<(string Stream, long HourUtc), DateTimeOffset> _seen = [];

    /// <summary>Notes that <paramref name="stream"/> was analysed now, with data of <paramref name="dataUtc"/>.</summary>
    public void Seen(string stream, DateTimeOffset dataUtc)
    {
        var seconds = dataUtc.ToUnixTimeSeconds();
        var hour = seconds - ((seconds % 3600) + 3600) % 3600;
        var now = time.GetUtcNow();
        lock (_gate)
        {
            _seen[(stream, hour)] = now;
        }
    }

    /// <summary>Everything noted since the last call, and forgets it.</summary>
    public IReadOnlyList<Store.StreamSighting> Take()
    {
        Dictionary<(string Stream, long HourUtc), DateTimeOffset> taken;
        lock (_gate)
        {
            if (_seen.Count == 0)
            {
                return [];
            }

            taken = _seen;
            _seen = [];
        }

        var result = new List<Store.StreamSighting>(taken.Count);
        foreach (var ((stream, hour), seen) in taken)
        {
            result.Add(new Store.StreamSighting(stream, hour, seen));
        }

        return result;
    }

    /// <summary>Puts back what could not be stored, so the next beat writes it; a newer note of the same stream and hour wins.</summary>
    public void Restore(IReadOnlyList<Store.StreamSighting> sightings)
    {
        ArgumentNullException.ThrowIfNull(sightings);
        lock (_gate)
        {
            foreach (var s in sightings)
            {
                if (!_seen.TryGetValue((s.Stream, s.HourUtc), out var newer) || newer < s.LastSeenUtc)
                {
                    _seen[(s.Stream, s.HourUtc)] = s.LastSeenUtc;
                }
            }
        }
    }
}
