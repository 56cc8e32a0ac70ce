using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace HumWatch.Core.Spectra.Fft;

/// <summary>
/// A buffer of <typeparamref name="T"/> (double or float) whose first element sits on a 64-byte boundary (one cache
/// line; two Vector256 values). The array lives on the pinned object heap, so its address never changes and nothing
/// needs freeing.
/// </summary>
internal sealed class AlignedScratch<T>
    where T : unmanaged
{
    private const int AlignmentBytes = 64;

    private readonly T[] _array;
    private readonly int _offset;

    /// <summary>
    /// Allocates <paramref name="length"/> elements (≥ 0). <paramref name="misalignBytes"/> (0 … 63, a multiple of the
    /// element size) shifts the start off the boundary on purpose, so a benchmark can measure what the alignment is worth.
    /// </summary>
    public AlignedScratch(int length, int misalignBytes = 0)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(length);
        var elementBytes = Unsafe.SizeOf<T>();
        if (misalignBytes < 0 || misalignBytes >= AlignmentBytes || misalignBytes % elementBytes != 0)
        {
            throw new ArgumentOutOfRangeException(nameof(misalignBytes), misalignBytes, $"Misalignment must be a multiple of {elementBytes} bytes between 0 and {AlignmentBytes - elementBytes}.");
        }

        _array = GC.AllocateArray<T>(length + ((2 * AlignmentBytes) / elementBytes), pinned: true);
        var address = (long)Marshal.UnsafeAddrOfPinnedArrayElement(_array, 0);
        var skipBytes = (int)((AlignmentBytes - (address % AlignmentBytes)) % AlignmentBytes) + misalignBytes;
        _offset = skipBytes / elementBytes;
        Length = length;
    }

    /// <summary>Usable elements.</summary>
    public int Length { get; }

    /// <summary>Byte address of the first usable element modulo 64 (0 unless misaligned on purpose).</summary>
    public int AddressModulo64 => (int)((long)Marshal.UnsafeAddrOfPinnedArrayElement(_array, _offset) % AlignmentBytes);

    /// <summary>The usable buffer.</summary>
    public Span<T> Span => _array.AsSpan(_offset, Length);
}
