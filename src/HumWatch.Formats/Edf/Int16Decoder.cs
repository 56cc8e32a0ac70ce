using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace HumWatch.Formats.Edf;

/// <summary>
/// EDF's 16-bit digital → µV step, physical = digital·scale + offset in double, rounded once to float. The AVX path does
/// the same multiply, add and round-to-nearest per sample as the scalar loop (no fused multiply-add), so both give
/// bit-identical floats.
/// </summary>
internal static class Int16Decoder
{
    public static void Decode(ReadOnlySpan<short> digital, Span<float> physicalUv, double scale, double offset)
    {
        if (physicalUv.Length < digital.Length)
        {
            throw new ArgumentException($"Destination holds {physicalUv.Length} samples; {digital.Length} needed.", nameof(physicalUv));
        }

        var i = 0;
        if (Avx.IsSupported && digital.Length >= 8)
        {
            var scales = Vector256.Create(scale);
            var offsets = Vector256.Create(offset);
            ref var source = ref MemoryMarshal.GetReference(digital);
            ref var target = ref MemoryMarshal.GetReference(physicalUv);
            for (; i <= digital.Length - 8; i += 8)
            {
                var eight = Vector128.LoadUnsafe(ref source, (nuint)i);
                var (low, high) = Vector128.Widen(eight);
                var lowUv = Avx.Add(Avx.Multiply(Avx.ConvertToVector256Double(low), scales), offsets);
                var highUv = Avx.Add(Avx.Multiply(Avx.ConvertToVector256Double(high), scales), offsets);
                Avx.ConvertToVector128Single(lowUv).StoreUnsafe(ref target, (nuint)i);
                Avx.ConvertToVector128Single(highUv).StoreUnsafe(ref target, (nuint)(i + 4));
            }
        }

        for (; i < digital.Length; i++)
        {
            physicalUv[i] = (float)((digital[i] * scale) + offset);
        }
    }
}
