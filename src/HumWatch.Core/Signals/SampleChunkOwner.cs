namespace HumWatch.Core.Signals;

/// <summary>
/// The one owner of a chunk whose sample array is lent: rented from an <see cref="ISampleArrayPool"/>, or a reader's
/// buffer that the next chunk overwrites. <see cref="Dispose"/> ends the loan: it revokes <see cref="Chunk"/> (reading
/// its samples then throws <see cref="ObjectDisposedException"/>) and gives a rented array back, exactly once however
/// often it is called. Whoever holds the owner releases it; everyone else sees only the borrowed <see cref="Chunk"/>.
/// </summary>
public sealed class SampleChunkOwner : IDisposable
{
    private readonly ISampleArrayPool? _pool;
    private float[]? _samplesUv;

    /// <param name="samplesUv">Channel-major samples in µV, lent to this owner until it is disposed.</param>
    /// <param name="pool">The pool <paramref name="samplesUv"/> is rented from; null when the array is a reader's buffer that nobody returns.</param>
    /// <param name="layout">Rate and channels.</param>
    /// <param name="firstSampleIndex">Index of the first sample counted from the stream's start.</param>
    /// <param name="samplesPerChannel">Logical length per channel.</param>
    /// <param name="startUtc">UTC time of the first sample, when the source knows it.</param>
    public SampleChunkOwner(float[] samplesUv, ISampleArrayPool? pool, StreamLayout layout, long firstSampleIndex, int samplesPerChannel, DateTimeOffset? startUtc = null)
    {
        _samplesUv = samplesUv;
        _pool = pool;
        Chunk = new SampleChunk(layout, firstSampleIndex, samplesPerChannel, samplesUv, startUtc, this);
    }

    /// <summary>A copy of <paramref name="chunk"/> that the caller owns: how a borrowed chunk is kept past its loan.</summary>
    /// <param name="chunk">The samples to copy; a released chunk throws <see cref="ObjectDisposedException"/>.</param>
    /// <param name="pool">Rent the copy's array from here; null for a fresh array.</param>
    /// <exception cref="InvalidOperationException">The pool has no room for the copy.</exception>
    public static SampleChunkOwner CopyOf(SampleChunk chunk, ISampleArrayPool? pool = null)
    {
        ArgumentNullException.ThrowIfNull(chunk);
        var source = chunk.SamplesUv;
        var copy = pool is null ? new float[source.Length] : pool.TryRent(source.Length)
            ?? throw new InvalidOperationException($"The sample pool has no room for a copy of {source.Length} samples.");
        source.CopyTo(copy);
        return new SampleChunkOwner(copy, pool, chunk.Layout, chunk.FirstSampleIndex, chunk.SamplesPerChannel, chunk.StartUtc);
    }

    /// <summary>The borrowed view; valid until <see cref="Dispose"/>. Do not keep it past the owner.</summary>
    public SampleChunk Chunk { get; }

    /// <summary>True once <see cref="Dispose"/> has run.</summary>
    public bool IsReleased => Volatile.Read(ref _samplesUv) is null;

    /// <summary>Revokes <see cref="Chunk"/> and gives a rented array back to its pool; later calls do nothing.</summary>
    public void Dispose()
    {
        var samples = Interlocked.Exchange(ref _samplesUv, null);
        if (samples is not null)
        {
            _pool?.GiveBack(samples);
        }
    }
}
