namespace HumWatch.Core.Signals;

/// <summary>Where a chunk's pooled sample array comes from and goes back to; <see cref="SampleChunkOwner"/> is its only caller of <see cref="GiveBack"/>.</summary>
public interface ISampleArrayPool
{
    /// <summary>An array of exactly <paramref name="length"/> floats (contents undefined), or null when the pool has no room.</summary>
    float[]? TryRent(int length);

    /// <summary>Takes a rented array back; called once per rental, after the last read.</summary>
    void GiveBack(float[] samplesUv);
}
