using HumWatch.Core.Signals;

namespace HumWatch.Formats.Wire;

/// <summary>
/// Sample arrays for decoded chunks, reused instead of allocated per message, under one byte budget that bounds the
/// memory of all decoded samples in flight (rented) plus those kept for reuse (idle). Thread-safe.
/// </summary>
/// <remarks>
/// Arrays are kept per exact length, so streams of the same shape share them and a chunk's array holds exactly its
/// samples. Ownership: <see cref="TryRent"/> hands an array to one <see cref="SampleChunkOwner"/>, whose disposal gives
/// it back with <see cref="GiveBack"/> exactly once, after the last read. A second return, or an array this pool did not
/// hand out, throws <see cref="InvalidOperationException"/> rather than let two chunks share one array.
/// </remarks>
public sealed class SampleBufferPool : ISampleArrayPool
{
    /// <summary>Smallest budget, 64 KiB.</summary>
    public const long MinBudgetBytes = 64L * 1024;

    /// <summary>Largest budget, 64 GiB.</summary>
    public const long MaxBudgetBytes = 64L * 1024 * 1024 * 1024;

    private readonly Lock _lock = new();
    private readonly Dictionary<int, Stack<float[]>> _idle = [];
    private readonly HashSet<float[]> _rented = new(ReferenceEqualityComparer.Instance);
    private readonly bool _poisonReturned;
    private long _rentedBytes;
    private long _idleBytes;
    private long _peakRentedBytes;
    private long _refused;
    private long _allocated;

    /// <param name="budgetBytes">Most bytes of rented plus idle arrays, <see cref="MinBudgetBytes"/> to <see cref="MaxBudgetBytes"/>.</param>
    /// <param name="poisonReturned">Fill returned arrays with NaN so a read after return shows up (tests and diagnosis; costs a pass over the array).</param>
    public SampleBufferPool(long budgetBytes, bool poisonReturned = false)
    {
        if (budgetBytes is < MinBudgetBytes or > MaxBudgetBytes)
        {
            throw new ArgumentOutOfRangeException(nameof(budgetBytes), budgetBytes, $"Must be between {MinBudgetBytes} (64 KiB) and {MaxBudgetBytes} (64 GiB) bytes.");
        }

        BudgetBytes = budgetBytes;
        _poisonReturned = poisonReturned;
    }

    /// <summary>Most bytes of rented plus idle arrays.</summary>
    public long BudgetBytes { get; }

    /// <summary>Bytes of arrays rented and not yet returned.</summary>
    public long RentedBytes
    {
        get
        {
            lock (_lock)
            {
                return _rentedBytes;
            }
        }
    }

    /// <summary>Arrays rented and not yet returned.</summary>
    public int RentedCount
    {
        get
        {
            lock (_lock)
            {
                return _rented.Count;
            }
        }
    }

    /// <summary>Bytes of returned arrays kept for reuse.</summary>
    public long IdleBytes
    {
        get
        {
            lock (_lock)
            {
                return _idleBytes;
            }
        }
    }

    /// <summary>Highest <see cref="RentedBytes"/> so far.</summary>
    public long PeakRentedBytes => Interlocked.Read(ref _peakRentedBytes);

    /// <summary>Rentals refused because the budget was spent.</summary>
    public long RefusedCount => Interlocked.Read(ref _refused);

    /// <summary>Arrays created (the rest of the rentals reused one).</summary>
    public long AllocatedCount => Interlocked.Read(ref _allocated);

    /// <summary>An array of exactly <paramref name="length"/> floats (contents undefined), or null when renting it would exceed the budget.</summary>
    /// <param name="length">Floats, 1 to <see cref="Array.MaxLength"/>.</param>
    public float[]? TryRent(int length)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(length, 1);
        var bytes = 4L * length;
        float[]? buffer = null;
        lock (_lock)
        {
            if (_rentedBytes + bytes > BudgetBytes)
            {
                _refused++;
                return null;
            }

            if (_idle.TryGetValue(length, out var stack) && stack.Count > 0)
            {
                buffer = stack.Pop();
                _idleBytes -= bytes;
            }
            else
            {
                // Make room among idle arrays of other lengths (shapes no longer sent) before growing.
                TrimIdle(BudgetBytes - _rentedBytes - bytes);
                _allocated++;
            }

            _rentedBytes += bytes;
            if (_rentedBytes > _peakRentedBytes)
            {
                _peakRentedBytes = _rentedBytes;
            }

            if (buffer is not null)
            {
                _rented.Add(buffer);
                return buffer;
            }
        }

        // Allocate outside the lock; the budget already counts it. A large array may land on the LOH, but only once.
        buffer = new float[length];
        lock (_lock)
        {
            _rented.Add(buffer);
        }

        return buffer;
    }

    /// <summary>Gives a rented array back; call exactly once per rental, after the last read of it.</summary>
    /// <exception cref="InvalidOperationException">The array is not rented from this pool (returned twice, or never rented here).</exception>
    public void GiveBack(float[] samplesUv)
    {
        ArgumentNullException.ThrowIfNull(samplesUv);
        if (_poisonReturned)
        {
            // Poison only arrays we handed out, so a wrong return cannot damage a caller's own data.
            lock (_lock)
            {
                if (!_rented.Contains(samplesUv))
                {
                    throw NotRented(samplesUv);
                }
            }

            samplesUv.AsSpan().Fill(float.NaN);
        }

        var bytes = 4L * samplesUv.Length;
        lock (_lock)
        {
            if (!_rented.Remove(samplesUv))
            {
                throw NotRented(samplesUv);
            }

            _rentedBytes -= bytes;
            if (_rentedBytes + _idleBytes + bytes <= BudgetBytes)
            {
                if (!_idle.TryGetValue(samplesUv.Length, out var stack))
                {
                    stack = new Stack<float[]>();
                    _idle[samplesUv.Length] = stack;
                }

                stack.Push(samplesUv);
                _idleBytes += bytes;
            }
        }
    }

    /// <summary>True when <paramref name="buffer"/> is rented from this pool and not yet returned.</summary>
    public bool IsRented(float[] buffer)
    {
        ArgumentNullException.ThrowIfNull(buffer);
        lock (_lock)
        {
            return _rented.Contains(buffer);
        }
    }

    private static InvalidOperationException NotRented(float[] buffer) =>
        new($"A sample array of {buffer.Length} floats was returned that is not rented from this pool (returned twice, or never rented here).");

    /// <summary>Drops idle arrays (to the GC) until at most <paramref name="maxIdleBytes"/> stay. Caller holds the lock.</summary>
    private void TrimIdle(long maxIdleBytes)
    {
        if (_idleBytes <= maxIdleBytes)
        {
            return;
        }

        foreach (var stack in _idle.Values)
        {
            while (stack.Count > 0 && _idleBytes > maxIdleBytes)
            {
                _idleBytes -= 4L * stack.Pop().Length;
            }

            if (_idleBytes <= maxIdleBytes)
            {
                return;
            }
        }
    }
}
