using System.Runtime.CompilerServices;
using HumWatch.Core.Signals;
using HumWatch.Host.Ingest;

namespace HumWatch.Host.Tests.Ingest.Support;

/// <summary>Hands out fresh sample arrays and counts how often each comes back, so a test can prove "exactly once". Thread-safe.</summary>
internal sealed class CountingSamplePool : ISampleArrayPool
{
    private readonly Lock _lock = new();
    private readonly List<float[]> _rented = [];
    private readonly ConditionalWeakTable<float[], StrongBox<int>> _returns = [];
    private int _foreign;

    public int RentalCount
    {
        get
        {
            lock (_lock)
            {
                return _rented.Count;
            }
        }
    }

    /// <summary>Rentals not given back yet.</summary>
    public int OutstandingCount
    {
        get
        {
            lock (_lock)
            {
                return _rented.Count(a => ReturnsOf(a) == 0);
            }
        }
    }

    public float[]? TryRent(int length)
    {
        var array = new float[length];
        lock (_lock)
        {
            _rented.Add(array);
            _returns.Add(array, new StrongBox<int>(0));
        }

        return array;
    }

    public void GiveBack(float[] samplesUv)
    {
        lock (_lock)
        {
            if (_returns.TryGetValue(samplesUv, out var count))
            {
                count.Value++;
            }
            else
            {
                _foreign++;
            }
        }
    }

    /// <summary>A chunk of <paramref name="streamId"/> whose samples are rented here.</summary>
    public StreamChunk Chunk(string streamId, StreamLayout layout, long firstIndex, int samplesPerChannel = 125) =>
        new(streamId, SampleChunkOwner.CopyOf(Some.Chunk(layout, firstIndex, samplesPerChannel, 1), this), "test");

    /// <summary>Fails unless every array rented so far came back exactly once and nothing else came back.</summary>
    public void AssertEachReturnedOnce(int expectedRentals)
    {
        lock (_lock)
        {
            if (_rented.Count != expectedRentals)
            {
                throw new Xunit.Sdk.XunitException($"{_rented.Count} arrays rented, expected {expectedRentals}.");
            }

            var wrong = _rented.Select((a, i) => (Index: i, Returns: ReturnsOf(a))).Where(r => r.Returns != 1).ToList();
            if (wrong.Count > 0 || _foreign > 0)
            {
                throw new Xunit.Sdk.XunitException(
                    $"Not returned exactly once: {string.Join(", ", wrong.Select(r => $"rental {r.Index} × {r.Returns}"))}; {_foreign} returns of arrays never rented here.");
            }
        }
    }

    private int ReturnsOf(float[] array) => _returns.TryGetValue(array, out var count) ? count.Value : 0;
}
