using HumWatch.Host.Ingest;
using Xunit;

namespace HumWatch.Host.Tests.Ingest;

/// <summary>
/// Checks the buffers on an instance of their own: installing them is process-wide and cannot be undone (NetMQ's
/// <c>BufferPool.SetCustomBufferPool</c>), so these tests leave NetMQ's global pool to the service and socket tests.
/// </summary>
public sealed class NetMqMessageBuffersTests
{
    [Fact]
    public void Buffers_taken_before_the_pool_was_installed_come_back_without_an_error()
    {
        using var buffers = new NetMqMessageBuffers.PooledMessageBuffers();

        // A message allocated by NetMQ's default pool has any length; returning it must not throw on NetMQ's thread.
        var ex = Record.Exception(() =>
        {
            buffers.Return(new byte[123]);
            buffers.Return(new byte[5 * 1024 * 1024]);
            buffers.Return(new byte[8]);
        });

        Assert.Null(ex);
    }

    [Fact]
    public void Pooled_buffers_are_at_least_the_size_asked_for_and_are_reused()
    {
        using var buffers = new NetMqMessageBuffers.PooledMessageBuffers();

        var first = buffers.Take(3_500_000);
        buffers.Return(first);
        var second = buffers.Take(3_500_000);
        buffers.Return(second);

        Assert.True(first.Length >= 3_500_000);
        Assert.Same(first, second);
    }

    [Fact]
    public void A_buffer_of_a_length_the_pool_never_hands_out_is_left_to_the_collector()
    {
        using var buffers = new NetMqMessageBuffers.PooledMessageBuffers();
        var odd = new byte[4096 + 1];

        buffers.Return(odd);
        var taken = buffers.Take(4096 + 1);

        Assert.NotSame(odd, taken);
    }
}
