using System.Runtime.InteropServices;

namespace HumWatch.Core.Spectra.Fft;

/// <summary>
/// A double buffer whose first element sits on a 64-byte boundary (one cache line; two Vector256 values).
/// The array lives on the pinned object heap, so its address never changes and nothing needs freeing.
/// </summary>
internal sealed class AlignedScratch
{
    private const int AlignmentBytes = 64;

    private readonly double[] _array;
    private readonly int _offset;

    /// <summary>
    /// Allocates <paramref name="length"/> doubles (≥ 0). <paramref name="misalignBytes"/> (0 … 56, a multiple of 8) shifts the
    /// start off the boundary on purpose, so a benchmark can measure what the alignment is worth.
    /// </summary>
    public AlignedScratch(int length, int misalignBytes = 0)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(length);
        if (misalignBytes < 0 || misalignBytes >= AlignmentBytes || misalignBytes % sizeof(double) != 0)
        {
            throw new ArgumentOutOfRangeException(nameof(misalignBytes), misalignBytes, "Misalignment must be a multiple of 8 bytes between 0 and 56.");
        }

        _array = GC.AllocateArray<double>(length + ((2 * AlignmentBytes) / sizeof(double)), pinned: true);
        var address = (long)Marshal.UnsafeAddrOfPinnedArrayElement(_array, 0);
        var skipBytes = (int)((AlignmentBytes - (address % AlignmentBytes)) % AlignmentBytes) + misalignBytes;
        _offset = skipBytes / sizeof(double);
        Length = length;
    }

    /// <summary>Usable doubles.</summary>
    public int Length { get; }

    /// <summary>Byte address of the first usable element modulo 64 (0 unless misaligned on purpose).</summary>
    public int AddressModulo64 => (int)((long)Marshal.UnsafeAddrOfPinnedArrayElement(_array, _offset) % AlignmentBytes);

    /// <summary>The usable buffer.</summary>
    public Span<double> Span => _array.AsSpan(_offset, Length);
}
