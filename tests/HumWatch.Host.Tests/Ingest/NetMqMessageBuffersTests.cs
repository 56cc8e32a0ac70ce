using HumWatch.Host.Ingest;
using NetMQ;
using Xunit;

namespace HumWatch.Host.Tests.Ingest;

public sealed class NetMqMessageBuffersTests
{
    [Fact]
    public void Buffers_taken_before_the_pool_was_installed_come_back_without_an_error()
    {
        NetMqMessageBuffers.Install();

        // A message allocated by NetMQ's default pool has any length; returning it must not throw on NetMQ's thread.
        var ex = Record.Exception(() =>
        {
            BufferPool.Return(new byte[123]);
            BufferPool.Return(new byte[5 * 1024 * 1024]);
            BufferPool.Return(new byte[8]);
        });

        Assert.Null(ex);
    }

    [Fact]
    public void Pooled_buffers_are_at_least_the_size_asked_for_and_are_reused()
    {
        NetMqMessageBuffers.Install();

        // A size class no other test's messages use, so a parallel test cannot take the array in between.
        var first = BufferPool.Take(3_500_000);
        BufferPool.Return(first);
        var second = BufferPool.Take(3_500_000);
        BufferPool.Return(second);

        Assert.True(first.Length >= 3_500_000);
        Assert.Same(first, second);
    }
}
