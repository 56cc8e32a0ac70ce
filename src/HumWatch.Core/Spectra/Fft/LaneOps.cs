using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace HumWatch.Core.Spectra.Fft;

/// <summary>
/// Arithmetic on one "lane pack" of the structure-of-arrays FFT: a scalar (one channel) or a vector (one channel per
/// lane) of <typeparamref name="TScalar"/> (double or float). The FFT stages, the power steps and the loads, transposes and
/// stores of <see cref="LaneGroupPeriodogram{TOps, TVec, TScalar}"/> are generic over this, so one copy serves every width
/// and precision; the JIT specialises each struct.
/// </summary>
internal interface ILaneOps<TVec, TScalar>
    where TVec : struct
    where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
{
    /// <summary>Channels per pack.</summary>
    static abstract int Lanes { get; }

    /// <summary>Every lane set to <paramref name="value"/>.</summary>
    static abstract TVec Splat(TScalar value);

    /// <summary>a + b.</summary>
    static abstract TVec Add(TVec a, TVec b);

    /// <summary>a − b.</summary>
    static abstract TVec Sub(TVec a, TVec b);

    /// <summary>a · b.</summary>
    static abstract TVec Mul(TVec a, TVec b);

    /// <summary>a · b + c (fused where the hardware has it).</summary>
    static abstract TVec MulAdd(TVec a, TVec b, TVec c);

    /// <summary>c − a · b (fused where the hardware has it).</summary>
    static abstract TVec NegMulAdd(TVec a, TVec b, TVec c);

    /// <summary><see cref="Lanes"/> consecutive values from <paramref name="source"/>, lane i = source[i].</summary>
    static abstract TVec Load(ref readonly TScalar source);

    /// <summary>Writes the lanes to <see cref="Lanes"/> consecutive values at <paramref name="target"/>.</summary>
    static abstract void Store(TVec value, ref TScalar target);

    /// <summary>
    /// One step of the in-register transpose: with blocks of <paramref name="blockLanes"/> lanes (a power of two below
    /// <see cref="Lanes"/>), <paramref name="a"/> becomes the even blocks of a and b interleaved (a₀ b₀ a₂ b₂ …) and
    /// <paramref name="b"/> the odd ones (a₁ b₁ a₃ b₃ …).
    /// </summary>
    static abstract void InterleaveBlocks(ref TVec a, ref TVec b, int blockLanes);
}

/// <summary>The lane-independent steps built on <see cref="ILaneOps{TVec, TScalar}"/>.</summary>
internal static class LanePacks
{
    /// <summary>
    /// Transposes the square of <c>Lanes</c> packs in place (pack i lane j ↔ pack j lane i): log₂(Lanes) rounds of
    /// <see cref="ILaneOps{TVec, TScalar}.InterleaveBlocks"/> on packs 2^r apart, one operation per pack and round.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void Transpose<TOps, TVec, TScalar>(Span<TVec> square)
        where TOps : struct, ILaneOps<TVec, TScalar>
        where TVec : struct
        where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
    {
        var lanes = TOps.Lanes;
        if (lanes == 4 || lanes == 8)
        {
            // The rounds in registers for the common widths (Lanes is a JIT constant, so one branch survives);
            // bit b of the row index meets bit b of the lane index in round b, and the rounds commute.
            var quad = square[..4];
            var (r0, r1, r2, r3) = (quad[0], quad[1], quad[2], quad[3]);
            if (lanes == 8)
            {
                var high = square.Slice(4, 4);
                var (r4, r5, r6, r7) = (high[0], high[1], high[2], high[3]);
                TOps.InterleaveBlocks(ref r0, ref r4, 4);
                TOps.InterleaveBlocks(ref r1, ref r5, 4);
                TOps.InterleaveBlocks(ref r2, ref r6, 4);
                TOps.InterleaveBlocks(ref r3, ref r7, 4);
                Quad<TOps, TVec, TScalar>(ref r4, ref r5, ref r6, ref r7);
                (high[0], high[1], high[2], high[3]) = (r4, r5, r6, r7);
            }

            Quad<TOps, TVec, TScalar>(ref r0, ref r1, ref r2, ref r3);
            (quad[0], quad[1], quad[2], quad[3]) = (r0, r1, r2, r3);
            return;
        }

        for (var block = 1; block < lanes; block *= 2)
        {
            for (var i = 0; i < lanes; i++)
            {
                if ((i & block) == 0)
                {
                    TOps.InterleaveBlocks(ref square[i], ref square[i + block], block);
                }
            }
        }
    }

    // Rounds of blocks 1 and 2 on four packs.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void Quad<TOps, TVec, TScalar>(ref TVec r0, ref TVec r1, ref TVec r2, ref TVec r3)
        where TOps : struct, ILaneOps<TVec, TScalar>
        where TVec : struct
        where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
    {
        TOps.InterleaveBlocks(ref r0, ref r1, 1);
        TOps.InterleaveBlocks(ref r2, ref r3, 1);
        TOps.InterleaveBlocks(ref r0, ref r2, 2);
        TOps.InterleaveBlocks(ref r1, ref r3, 2);
    }

    /// <summary>(xr + i·xi)·(wr + i·wi) with every lane times the same twiddle (the FFT stages' and the split step's one product).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void MultiplyByTwiddle<TOps, TVec, TScalar>(ref TVec xr, ref TVec xi, TScalar wr, TScalar wi)
        where TOps : struct, ILaneOps<TVec, TScalar>
        where TVec : struct
        where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
    {
        var vr = TOps.Splat(wr);
        var vi = TOps.Splat(wi);
        var r = TOps.NegMulAdd(xi, vi, TOps.Mul(xr, vr));
        xi = TOps.MulAdd(xi, vr, TOps.Mul(xr, vi));
        xr = r;
    }

    /// <summary>Lane <paramref name="lane"/> of <paramref name="value"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static TScalar Get<TVec, TScalar>(in TVec value, int lane)
        where TVec : struct
        where TScalar : unmanaged =>
        Unsafe.Add(ref Unsafe.As<TVec, TScalar>(ref Unsafe.AsRef(in value)), lane);
}

/// <summary>One channel per pack: plain scalars, the fallback when no vector width is hardware accelerated.</summary>
internal readonly struct ScalarLanes<T> : ILaneOps<T, T>
    where T : unmanaged, IFloatingPointIeee754<T>
{
    public static int Lanes => 1;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static T Splat(T value) => value;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static T Add(T a, T b) => a + b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static T Sub(T a, T b) => a - b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static T Mul(T a, T b) => a * b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static T MulAdd(T a, T b, T c) => (a * b) + c;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static T NegMulAdd(T a, T b, T c) => c - (a * b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static T Load(ref readonly T source) => source;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void Store(T value, ref T target) => target = value;

    // A one-lane square is its own transpose; never called (Transpose runs no round for one lane).
    public static void InterleaveBlocks(ref T a, ref T b, int blockLanes)
    {
    }
}

/// <summary>One channel per lane of a Vector256 (four float64 or eight float32 channels per pack).</summary>
internal readonly partial struct Vector256Lanes<T> : ILaneOps<Vector256<T>, T>
    where T : unmanaged, IFloatingPointIeee754<T>
{
    public static int Lanes => Vector256<T>.Count;

    /// <summary>True when this width runs on the hardware (AVX: the interleaves use its shuffles).</summary>
    public static bool IsSupported => Vector256.IsHardwareAccelerated && Avx.IsSupported;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Splat(T value) => Vector256.Create(value);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Add(Vector256<T> a, Vector256<T> b) => a + b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Sub(Vector256<T> a, Vector256<T> b) => a - b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Mul(Vector256<T> a, Vector256<T> b) => a * b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> MulAdd(Vector256<T> a, Vector256<T> b, Vector256<T> c)
    {
        if (Fma.IsSupported && typeof(T) == typeof(double))
        {
            return Fma.MultiplyAdd(a.AsDouble(), b.AsDouble(), c.AsDouble()).As<double, T>();
        }

        if (Fma.IsSupported && typeof(T) == typeof(float))
        {
            return Fma.MultiplyAdd(a.AsSingle(), b.AsSingle(), c.AsSingle()).As<float, T>();
        }

        return (a * b) + c;
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> NegMulAdd(Vector256<T> a, Vector256<T> b, Vector256<T> c)
    {
        if (Fma.IsSupported && typeof(T) == typeof(double))
        {
            return Fma.MultiplyAddNegated(a.AsDouble(), b.AsDouble(), c.AsDouble()).As<double, T>();
        }

        if (Fma.IsSupported && typeof(T) == typeof(float))
        {
            return Fma.MultiplyAddNegated(a.AsSingle(), b.AsSingle(), c.AsSingle()).As<float, T>();
        }

        return c - (a * b);
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Load(ref readonly T source) => Vector256.LoadUnsafe(in source);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void Store(Vector256<T> value, ref T target) => value.StoreUnsafe(ref target);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void InterleaveBlocks(ref Vector256<T> a, ref Vector256<T> b, int blockLanes)
    {
        // By block size in bytes: 4 (float pairs) by a duplicate-and-blend, 8 by the 64-bit unpacks (within each 128-bit
        // half, where even and odd 64-bit blocks are the low and high ones), 16 by swapping halves: one or two shuffles.
        var blockBytes = blockLanes * Unsafe.SizeOf<T>();
        Vector256<T> even;
        Vector256<T> odd;
        if (blockBytes == 4)
        {
            // even = a₀ b₀ a₂ b₂ …: b's even lanes copied up one (b₀ b₀ b₂ b₂ …) blended into a's odd places; odd likewise.
            even = Avx.Blend(a.AsSingle(), Avx.Permute(b.AsSingle(), 0xA0), 0xAA).As<float, T>();
            odd = Avx.Blend(Avx.Permute(a.AsSingle(), 0xF5), b.AsSingle(), 0xAA).As<float, T>();
        }
        else if (blockBytes == 8)
        {
            even = Avx.UnpackLow(a.AsDouble(), b.AsDouble()).As<double, T>();
            odd = Avx.UnpackHigh(a.AsDouble(), b.AsDouble()).As<double, T>();
        }
        else
        {
            even = Avx.Permute2x128(a.AsDouble(), b.AsDouble(), 0x20).As<double, T>();
            odd = Avx.Permute2x128(a.AsDouble(), b.AsDouble(), 0x31).As<double, T>();
        }

        a = even;
        b = odd;
    }
}

/// <summary>
/// One channel per lane of a Vector512, built from two <see cref="Vector256Lanes{T}"/> halves for the interleaves, so it
/// runs (slowly) without AVX-512 too: tests check the 512-bit data flow on any AVX machine.
/// </summary>
internal readonly partial struct Vector512Lanes<T> : ILaneOps<Vector512<T>, T>
    where T : unmanaged, IFloatingPointIeee754<T>
{
    public static int Lanes => Vector512<T>.Count;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Splat(T value) => Vector512.Create(value);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Add(Vector512<T> a, Vector512<T> b) => a + b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Sub(Vector512<T> a, Vector512<T> b) => a - b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Mul(Vector512<T> a, Vector512<T> b) => a * b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> MulAdd(Vector512<T> a, Vector512<T> b, Vector512<T> c)
    {
        // AVX-512 has fused multiply-add at full width (AVX-512F); without it, two fused halves (or plain a·b + c, as Vector256Lanes
        // does without FMA). A fused operation rounds once, so every path gives each lane the Vector256 result.
        if (Avx512F.IsSupported && typeof(T) == typeof(double))
        {
            return Avx512F.FusedMultiplyAdd(a.AsDouble(), b.AsDouble(), c.AsDouble()).As<double, T>();
        }

        if (Avx512F.IsSupported && typeof(T) == typeof(float))
        {
            return Avx512F.FusedMultiplyAdd(a.AsSingle(), b.AsSingle(), c.AsSingle()).As<float, T>();
        }

        return Vector512.Create(
            Vector256Lanes<T>.MulAdd(a.GetLower(), b.GetLower(), c.GetLower()),
            Vector256Lanes<T>.MulAdd(a.GetUpper(), b.GetUpper(), c.GetUpper()));
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> NegMulAdd(Vector512<T> a, Vector512<T> b, Vector512<T> c)
    {
        if (Avx512F.IsSupported && typeof(T) == typeof(double))
        {
            return Avx512F.FusedMultiplyAddNegated(a.AsDouble(), b.AsDouble(), c.AsDouble()).As<double, T>();
        }

        if (Avx512F.IsSupported && typeof(T) == typeof(float))
        {
            return Avx512F.FusedMultiplyAddNegated(a.AsSingle(), b.AsSingle(), c.AsSingle()).As<float, T>();
        }

        return Vector512.Create(
            Vector256Lanes<T>.NegMulAdd(a.GetLower(), b.GetLower(), c.GetLower()),
            Vector256Lanes<T>.NegMulAdd(a.GetUpper(), b.GetUpper(), c.GetUpper()));
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Load(ref readonly T source) => Vector512.LoadUnsafe(in source);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void Store(Vector512<T> value, ref T target) => value.StoreUnsafe(ref target);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void InterleaveBlocks(ref Vector512<T> a, ref Vector512<T> b, int blockLanes)
    {
        if (blockLanes == Vector256<T>.Count)
        {
            // Blocks of half a vector: even = both lower halves, odd = both upper halves.
            (a, b) = (Vector512.Create(a.GetLower(), b.GetLower()), Vector512.Create(a.GetUpper(), b.GetUpper()));
            return;
        }

        var aLow = a.GetLower();
        var bLow = b.GetLower();
        var aHigh = a.GetUpper();
        var bHigh = b.GetUpper();
        Vector256Lanes<T>.InterleaveBlocks(ref aLow, ref bLow, blockLanes);
        Vector256Lanes<T>.InterleaveBlocks(ref aHigh, ref bHigh, blockLanes);
        a = Vector512.Create(aLow, aHigh);
        b = Vector512.Create(bLow, bHigh);
    }
}
