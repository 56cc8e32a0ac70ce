using System.Buffers;
using NetMQ;

namespace HumWatch.Host.Ingest;

/// <summary>
/// Lets NetMQ reuse message buffers from <see cref="ArrayPool{T}.Shared"/> instead of allocating one per frame (its
/// default). At hundreds of streams a fresh 32 KiB+ array per received frame was most of the process's allocation and
/// GC pause time. The setting is process-wide, so it is installed once and never undone.
/// </summary>
internal static class NetMqMessageBuffers
{
    private static int _installed;

    /// <summary>Installs the pooled buffers for every NetMQ socket in the process; later calls do nothing.</summary>
    public static void Install()
    {
        if (Interlocked.Exchange(ref _installed, 1) == 0)
        {
            BufferPool.SetCustomBufferPool(new SharedArrayBufferPool());
        }
    }

    private sealed class SharedArrayBufferPool : IBufferPool
    {
        // NetMQ keeps a message's size apart from its buffer, so a rounded-up array is fine.
        public byte[] Take(int size) => ArrayPool<byte>.Shared.Rent(size);

        public void Return(byte[] buffer) => ArrayPool<byte>.Shared.Return(buffer);

        public void Dispose()
        {
            // The shared pool lives as long as the process.
        }
    }
}
