using System.Buffers.Binary;
using System.Runtime.InteropServices;
using HumWatch.Core.Signals;

namespace HumWatch.Formats.Edf;

/// <summary>
/// Collects whole records of one group into a chunk buffer, decoding each channel to µV. Without reuse the buffer
/// goes to the chunk it becomes, which the caller may keep. With reuse (record ranges) the chunk is lent: a
/// <see cref="SampleChunkOwner"/> here ends the loan before the next record overwrites the buffer, so a chunk kept too
/// long throws instead of showing later samples.
/// </summary>
internal sealed class EdfRecordBatch(EdfGroupPlan plan, int recordsPerChunk, bool reuseBuffer) : IDisposable
{
    private readonly int _capacityPerChannel = plan.SamplesPerRecord * recordsPerChunk;
    private float[]? _buffer;
    private long _firstIndex;
    private SampleChunkOwner? _lent;

    public EdfGroupPlan Plan { get; } = plan;

    public int Filled { get; private set; }

    public long PendingStart { get; set; }

    public long EndIndex => _firstIndex + Filled;

    public bool IsFull => Filled >= _capacityPerChannel;

    public void Append(byte[] record, bool isBdf)
    {
        if (Filled == 0)
        {
            EndLoan();
            _buffer ??= new float[_capacityPerChannel * Plan.Layout.ChannelCount];
            _firstIndex = PendingStart;
        }

        var n = Plan.SamplesPerRecord;
        for (var c = 0; c < Plan.ByteOffsets.Length; c++)
        {
            var dst = _buffer!.AsSpan((c * _capacityPerChannel) + Filled, n);
            var scale = Plan.ScaleUv[c];
            var offset = Plan.OffsetUv[c];
            if (isBdf)
            {
                var src = record.AsSpan(Plan.ByteOffsets[c], n * 3);
                for (var i = 0; i < dst.Length; i++)
                {
                    var j = i * 3;
                    var digital = src[j] | (src[j + 1] << 8) | ((sbyte)src[j + 2] << 16);
                    dst[i] = (float)((digital * scale) + offset);
                }
            }
            else if (BitConverter.IsLittleEndian)
            {
                Int16Decoder.Decode(MemoryMarshal.Cast<byte, short>(record.AsSpan(Plan.ByteOffsets[c], n * 2)), dst, scale, offset);
            }
            else
            {
                var src = record.AsSpan(Plan.ByteOffsets[c], n * 2);
                for (var i = 0; i < dst.Length; i++)
                {
                    var digital = BinaryPrimitives.ReadInt16LittleEndian(src.Slice(i * 2, 2));
                    dst[i] = (float)((digital * scale) + offset);
                }
            }
        }

        Filled += n;
    }

    public SampleChunk TakeChunk()
    {
        var buffer = _buffer!;
        var filled = Filled;
        if (filled < _capacityPerChannel)
        {
            // A short batch (end of file, EDF+D gap): close up the channel blocks so channel c starts at c·filled.
            for (var c = 1; c < Plan.Layout.ChannelCount; c++)
            {
                Array.Copy(buffer, c * _capacityPerChannel, buffer, c * filled, filled);
            }
        }

        Filled = 0;
        if (reuseBuffer)
        {
            _lent = new SampleChunkOwner(buffer, pool: null, Plan.Layout, _firstIndex, filled);
            return _lent.Chunk;
        }

        _buffer = null;
        return new SampleChunk(Plan.Layout, _firstIndex, filled, buffer);
    }

    /// <summary>The reading is over: revokes the chunk lent last, like every earlier one at the next record.</summary>
    public void Dispose() => EndLoan();

    /// <summary>Revokes the chunk lent last, if any, before its buffer is overwritten.</summary>
    private void EndLoan()
    {
        _lent?.Dispose();
        _lent = null;
    }
}
