using HumWatch.Core.Signals;
using Xunit;

namespace HumWatch.Core.Tests.Signals;

public sealed class SampleChunkOwnerTests
{
    private static readonly StreamLayout TwoChannels = new(250, [new ChannelInfo("A"), new ChannelInfo("B")]);

    [Fact]
    public void Dispose_gives_the_rented_array_back_exactly_once_however_often_it_is_called()
    {
        var pool = new CountingPool();
        var owner = Rented(pool, [1, 2, 3, 4]);

        owner.Dispose();
        owner.Dispose();
        owner.Dispose();

        var returned = Assert.Single(pool.Returns);
        Assert.Same(pool.Rentals[0], returned);
        Assert.True(owner.IsReleased);
        Assert.True(owner.Chunk.IsReleased);
    }

    [Fact]
    public void A_released_view_refuses_its_samples_but_keeps_its_place_in_the_stream()
    {
        var owner = Rented(new CountingPool(), [1, 2, 3, 4], firstSampleIndex: 500);
        var view = owner.Chunk;
        Assert.Equal([1f, 2, 3, 4], view.SamplesUv);
        Assert.Equal([3f, 4], view.Channel(1));

        owner.Dispose();

        Assert.Throws<ObjectDisposedException>(() => view.SamplesUv.Length);
        Assert.Throws<ObjectDisposedException>(() => view.Channel(0).Length);
        Assert.Equal(500, view.FirstSampleIndex); // metadata is not lent, so logs may still name the chunk
        Assert.Equal(502, view.EndSampleIndex);
    }

    [Fact]
    public void A_view_moved_to_another_index_is_revoked_with_its_owner()
    {
        var owner = Rented(new CountingPool(), [1, 2, 3, 4]);
        var replay = owner.Chunk.At(1000, new DateTimeOffset(2025, 3, 1, 8, 0, 0, TimeSpan.Zero));
        Assert.Equal(1000, replay.FirstSampleIndex);
        Assert.Equal([1f, 2, 3, 4], replay.SamplesUv);

        owner.Dispose();

        Assert.Throws<ObjectDisposedException>(() => replay.SamplesUv.Length);
    }

    [Fact]
    public void A_chunk_over_a_callers_array_has_no_owner_and_is_never_released()
    {
        var chunk = new SampleChunk(TwoChannels, 0, 2, [1, 2, 3, 4, 99]);

        Assert.False(chunk.IsReleased);
        Assert.Equal(4, chunk.SamplesUv.Length); // logical samples only, not the spare element of the array
    }

    [Fact]
    public void A_copy_rents_its_own_array_so_it_outlives_the_chunk_it_was_made_from()
    {
        var pool = new CountingPool();
        var original = Rented(pool, [1, 2, 3, 4], firstSampleIndex: 8);
        using var copy = SampleChunkOwner.CopyOf(original.Chunk, pool);

        original.Dispose();

        Assert.Equal([1f, 2, 3, 4], copy.Chunk.SamplesUv);
        Assert.Equal(8, copy.Chunk.FirstSampleIndex);
        Assert.NotSame(pool.Rentals[0], pool.Rentals[1]);
        Assert.Single(pool.Returns);
    }

    [Fact]
    public void A_copy_into_a_pool_without_room_says_so()
    {
        var owner = new SampleChunkOwner([1, 2, 3, 4], pool: null, TwoChannels, 0, 2);

        var error = Assert.Throws<InvalidOperationException>(() => SampleChunkOwner.CopyOf(owner.Chunk, new CountingPool { Room = 0 }));

        Assert.Contains("no room", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void An_owner_without_a_pool_only_ends_the_loan()
    {
        float[] buffer = [1, 2, 3, 4];
        var owner = new SampleChunkOwner(buffer, pool: null, TwoChannels, 0, 2);

        owner.Dispose();

        Assert.True(owner.Chunk.IsReleased);
        Assert.Equal([1f, 2, 3, 4], buffer); // the reader's buffer is left as it was, for the reader to reuse
    }

    private static SampleChunkOwner Rented(CountingPool pool, float[] values, long firstSampleIndex = 0)
    {
        var array = pool.TryRent(values.Length)!;
        values.CopyTo(array, 0);
        return new SampleChunkOwner(array, pool, TwoChannels, firstSampleIndex, values.Length / 2);
    }

    /// <summary>Hands out fresh arrays and records every rental and return, so a test can count them.</summary>
    private sealed class CountingPool : ISampleArrayPool
    {
        public int Room { get; init; } = int.MaxValue;

        public List<float[]> Rentals { get; } = [];

        public List<float[]> Returns { get; } = [];

        public float[]? TryRent(int length)
        {
            if (Rentals.Count >= Room)
            {
                return null;
            }

            Rentals.Add(new float[length]);
            return Rentals[^1];
        }

        public void GiveBack(float[] samplesUv) => Returns.Add(samplesUv);
    }
}
