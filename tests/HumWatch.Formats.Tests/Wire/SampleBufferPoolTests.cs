using System.Text;
using HumWatch.Core.Signals;
using HumWatch.Formats.Wire;
using Xunit;

namespace HumWatch.Formats.Tests.Wire;

public sealed class SampleBufferPoolTests
{
    private const long Budget = 64 * 1024;

    [Theory]
    [InlineData(0)]
    [InlineData(SampleBufferPool.MinBudgetBytes - 1)]
    [InlineData(SampleBufferPool.MaxBudgetBytes + 1)]
    public void Budget_outside_64_KiB_to_64_GiB_is_refused_naming_the_parameter(long budgetBytes)
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new SampleBufferPool(budgetBytes));

        Assert.Equal("budgetBytes", ex.ParamName);
    }

    [Fact]
    public void Rental_past_the_budget_is_refused_until_an_array_comes_back()
    {
        var pool = new SampleBufferPool(Budget);
        var quarter = (int)(Budget / 4 / 4);

        var rented = Enumerable.Range(0, 4).Select(_ => pool.TryRent(quarter)!).ToList();
        var refused = pool.TryRent(1);
        pool.GiveBack(rented[0]);
        var again = pool.TryRent(quarter);

        Assert.All(rented, Assert.NotNull);
        Assert.Null(refused);
        Assert.Equal(1, pool.RefusedCount);
        Assert.Same(rented[0], again);
        Assert.Equal(Budget, pool.RentedBytes);
        Assert.Equal(4, pool.AllocatedCount);
    }

    [Fact]
    public void Arrays_have_exactly_the_requested_length_and_are_reused_per_length()
    {
        var pool = new SampleBufferPool(Budget);

        var a = pool.TryRent(1000)!;
        pool.GiveBack(a);
        var b = pool.TryRent(999)!;
        var c = pool.TryRent(1000)!;

        Assert.Equal(999, b.Length);
        Assert.Same(a, c);
        Assert.Equal(2, pool.RentedCount);
    }

    [Fact]
    public void A_second_return_or_a_foreign_array_throws_and_leaves_the_accounts_alone()
    {
        var pool = new SampleBufferPool(Budget);
        var a = pool.TryRent(100)!;
        pool.GiveBack(a);

        Assert.Throws<InvalidOperationException>(() => pool.GiveBack(a));
        Assert.Throws<InvalidOperationException>(() => pool.GiveBack(new float[100]));
        Assert.Equal(0, pool.RentedBytes);
        Assert.Equal(400, pool.IdleBytes);
    }

    [Fact]
    public void Returned_arrays_are_poisoned_with_NaN_when_asked()
    {
        var pool = new SampleBufferPool(Budget, poisonReturned: true);
        var a = pool.TryRent(50)!;
        a.AsSpan().Fill(1f);

        pool.GiveBack(a);

        Assert.All(a, v => Assert.True(float.IsNaN(v)));
        Assert.False(pool.IsRented(a));
    }

    [Fact]
    public void Idle_arrays_of_a_shape_no_longer_sent_make_room_for_a_new_one()
    {
        var pool = new SampleBufferPool(Budget);
        var half = (int)(Budget / 2 / 4);
        var old1 = pool.TryRent(half)!;
        var old2 = pool.TryRent(half)!;
        pool.GiveBack(old1);
        pool.GiveBack(old2);

        var shape = pool.TryRent(half - 1);

        Assert.NotNull(shape);
        Assert.True(pool.RentedBytes + pool.IdleBytes <= Budget, $"rented {pool.RentedBytes} + idle {pool.IdleBytes} over the budget {Budget}");
    }

    [Fact]
    public void Concurrent_renters_and_returners_never_hold_one_array_twice()
    {
        var pool = new SampleBufferPool(Budget * 4);
        var owners = new System.Collections.Concurrent.ConcurrentDictionary<float[], int>(ReferenceEqualityComparer.Instance);
        var clash = 0;
        Parallel.For(0, 4, worker =>
        {
            var random = new Random(worker);
            for (var i = 0; i < 5000; i++)
            {
                var a = pool.TryRent(64 + random.Next(3));
                if (a is null)
                {
                    continue;
                }

                if (!owners.TryAdd(a, worker))
                {
                    Interlocked.Increment(ref clash);
                }

                owners.TryRemove(a, out _);
                pool.GiveBack(a);
            }
        });

        Assert.Equal(0, clash);
        Assert.Equal(0, pool.RentedCount);
    }

    [Fact]
    public void Decode_with_a_pool_rents_the_sample_array_with_exactly_the_samples()
    {
        var pool = new SampleBufferPool(Budget);
        var chunk = new SampleChunk(new StreamLayout(250, [new ChannelInfo("A"), new ChannelInfo("B")]), 0, 3, [1, 2, 3, 4, 5, 6]);
        var message = ChunkWireCodec.Encode("lab-1", chunk);

        var result = ChunkWireCodec.Decode(message.Header, message.Samples, pool: pool);

        Assert.True(result.IsSuccess, result.Rejection?.Message);
        Assert.Equal(1, pool.RentedCount);
        Assert.Equal(6 * 4, pool.RentedBytes); // exactly 2 channels × 3 samples of float32
        Assert.Equal([1f, 2, 3, 4, 5, 6], result.Chunk.SamplesUv);

        result.Samples.Dispose();

        Assert.Equal(0, pool.RentedCount);
        Assert.Throws<ObjectDisposedException>(() => result.Chunk.SamplesUv[0]);
    }

    [Fact]
    public void Decode_returns_the_rented_array_when_a_sample_is_not_finite()
    {
        var pool = new SampleBufferPool(Budget);
        var chunk = new SampleChunk(new StreamLayout(250, [new ChannelInfo("A")]), 0, 3, [1, float.NaN, 3]);
        var message = ChunkWireCodec.Encode("lab-1", chunk);

        var result = ChunkWireCodec.Decode(message.Header, message.Samples, pool: pool);

        Assert.True(result.IsRejected);
        Assert.Equal(WireRejectReason.NonFiniteSample, result.Rejection.Reason);
        Assert.Equal(0, pool.RentedCount);
        Assert.Equal(1, pool.AllocatedCount);
    }

    [Fact]
    public void Decode_with_a_spent_pool_says_buffer_full_and_names_the_stream()
    {
        var pool = new SampleBufferPool(Budget);
        var hog = pool.TryRent((int)(Budget / 4))!;
        var header = Encoding.UTF8.GetBytes("""{"v":1,"stream":"lab-1","fs":250,"channels":["A"],"unit":"uV","index":0}""");

        var result = ChunkWireCodec.Decode(header, new byte[16], pool: pool);

        Assert.True(result.IsBufferFull);
        Assert.False(result.IsSuccess);
        Assert.False(result.IsRejected);
        Assert.Equal("lab-1", result.StreamId);
        Assert.True(pool.IsRented(hog));
        Assert.Equal(1, pool.RefusedCount);
    }
}
