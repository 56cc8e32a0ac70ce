using System.Buffers;
using System.Numerics;
using NetMQ;

namespace HumWatch.Host.Ingest;

/// <summary>
/// Lets NetMQ reuse message buffers instead of allocating one per frame (its default). At hundreds of streams a fresh
/// 32 KiB+ array per received frame was most of the process's allocation and GC pause time. The setting is
/// process-wide, so it is installed once and never undone; tests check a <see cref="PooledMessageBuffers"/> of their own
/// instead of installing it.
/// </summary>
/// <remarks>
/// A pool of its own rather than the shared one: after a pause the receive pipes hold up to their high-water mark of
/// messages at once (1000 per socket by default), far more than the shared pool keeps per size, so every message over
/// that would be allocated again. Only arrays that were in use at once are kept, so what it holds follows the peak.
/// </remarks>
internal static class NetMqMessageBuffers
{
    /// <summary>Frames up to 4 MiB are pooled; larger ones are allocated (and collected) as before.</summary>
    private const int MaxPooledBytes = 4 * 1024 * 1024;

    /// <summary>The pool's smallest size class; its classes are this times powers of two.</summary>
    private const int MinPooledBytes = 16;

    /// <summary>Arrays kept per power-of-two size class.</summary>
    private const int ArraysPerSize = 4096;

    private static int _installed;

    /// <summary>Installs the pooled buffers for every NetMQ socket in the process; later calls do nothing.</summary>
    public static void Install()
    {
        if (Interlocked.Exchange(ref _installed, 1) == 0)
        {
            BufferPool.SetCustomBufferPool(new PooledMessageBuffers());
        }
    }

    /// <summary>The buffers <see cref="Install"/> gives NetMQ; each instance has its own arrays.</summary>
    internal sealed class PooledMessageBuffers : IBufferPool
    {
        private readonly ArrayPool<byte> _pool = ArrayPool<byte>.Create(MaxPooledBytes, ArraysPerSize);

        // NetMQ keeps a message's size apart from its buffer, so a rounded-up array is fine.
        public byte[] Take(int size) => _pool.Rent(size);

        public void Return(byte[] buffer)
        {
            // Messages taken before the pool was installed come back with any length, and the pool throws (on NetMQ's
            // own thread, ending the process) for a length it does not hand out; those are left to the GC.
            if (buffer.Length >= MinPooledBytes && buffer.Length <= MaxPooledBytes && BitOperations.IsPow2(buffer.Length))
            {
                _pool.Return(buffer);
            }
        }

        public void Dispose()
        {
            // The pool lives as long as the process.
        }
    }
}
