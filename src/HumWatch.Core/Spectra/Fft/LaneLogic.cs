using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace HumWatch.Core.Spectra.Fft;

/// <summary>
/// Comparisons, masks and loads on a vector lane pack, for the kernels that test every lane (the line finder's
/// prefilter, the fault detector's block statistics): written once against this, specialised per width by the JIT.
/// A mask lane is all ones (true) or all zeros (false), as the comparisons return them.
/// </summary>
internal interface ILaneLogic<TVec, TScalar> : ILaneOps<TVec, TScalar>
    where TVec : struct
    where TScalar : unmanaged, IFloatingPointIeee754<TScalar>
{
    /// <summary>True when this width runs on the hardware (otherwise it still works, emulated, for tests).</summary>
    static abstract bool IsAccelerated { get; }

    /// <summary>a / b.</summary>
    static abstract TVec Div(TVec a, TVec b);

    /// <summary>|a|.</summary>
    static abstract TVec Abs(TVec a);

    /// <summary>a == b per lane.</summary>
    static abstract TVec Equal(TVec a, TVec b);

    /// <summary>a &lt; b per lane.</summary>
    static abstract TVec Less(TVec a, TVec b);

    /// <summary>a ≤ b per lane.</summary>
    static abstract TVec LessOrEqual(TVec a, TVec b);

    /// <summary>a &gt; b per lane.</summary>
    static abstract TVec Greater(TVec a, TVec b);

    /// <summary>a ≥ b per lane.</summary>
    static abstract TVec GreaterOrEqual(TVec a, TVec b);

    /// <summary>a &amp; b.</summary>
    static abstract TVec And(TVec a, TVec b);

    /// <summary>a | b.</summary>
    static abstract TVec Or(TVec a, TVec b);

    /// <summary>a &amp; ~b.</summary>
    static abstract TVec AndNot(TVec a, TVec b);

    /// <summary>Lane by lane, <paramref name="whenTrue"/> where <paramref name="mask"/> is set, else <paramref name="whenFalse"/>.</summary>
    static abstract TVec Select(TVec mask, TVec whenTrue, TVec whenFalse);

    /// <summary>True when every lane of a equals the same lane of b (so false when a lane is NaN).</summary>
    static abstract bool AllEqual(TVec a, TVec b);

    /// <summary>Bit i set when mask lane i is set.</summary>
    static abstract ulong MaskBits(TVec mask);

    /// <summary>Lane i = <paramref name="first"/>[i·<paramref name="stride"/>] converted to <typeparamref name="TScalar"/>.</summary>
    static abstract TVec WidenStrided(ref readonly float first, int stride);
}

/// <content>The comparisons and masks of the 256-bit width.</content>
internal readonly partial struct Vector256Lanes<T> : ILaneLogic<Vector256<T>, T>
{
    public static bool IsAccelerated => Vector256.IsHardwareAccelerated;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Div(Vector256<T> a, Vector256<T> b) => a / b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Abs(Vector256<T> a) => Vector256.Abs(a);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Equal(Vector256<T> a, Vector256<T> b) => Vector256.Equals(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Less(Vector256<T> a, Vector256<T> b) => Vector256.LessThan(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> LessOrEqual(Vector256<T> a, Vector256<T> b) => Vector256.LessThanOrEqual(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Greater(Vector256<T> a, Vector256<T> b) => Vector256.GreaterThan(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> GreaterOrEqual(Vector256<T> a, Vector256<T> b) => Vector256.GreaterThanOrEqual(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> And(Vector256<T> a, Vector256<T> b) => a & b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Or(Vector256<T> a, Vector256<T> b) => a | b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> AndNot(Vector256<T> a, Vector256<T> b) => Vector256.AndNot(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> Select(Vector256<T> mask, Vector256<T> whenTrue, Vector256<T> whenFalse) =>
        Vector256.ConditionalSelect(mask, whenTrue, whenFalse);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static bool AllEqual(Vector256<T> a, Vector256<T> b) => Vector256.EqualsAll(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static ulong MaskBits(Vector256<T> mask) => mask.ExtractMostSignificantBits();

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<T> WidenStrided(ref readonly float first, int stride)
    {
        if (typeof(T) == typeof(double))
        {
            return Vector256.Create(
                (double)first,
                Unsafe.Add(ref Unsafe.AsRef(in first), stride),
                Unsafe.Add(ref Unsafe.AsRef(in first), 2 * stride),
                Unsafe.Add(ref Unsafe.AsRef(in first), 3 * stride)).As<double, T>();
        }

        var result = default(Vector256<T>);
        ref var lane = ref Unsafe.As<Vector256<T>, T>(ref result);
        for (var i = 0; i < Vector256<T>.Count; i++)
        {
            Unsafe.Add(ref lane, i) = T.CreateTruncating(Unsafe.Add(ref Unsafe.AsRef(in first), i * stride));
        }

        return result;
    }
}

/// <content>The comparisons and masks of the 512-bit width.</content>
internal readonly partial struct Vector512Lanes<T> : ILaneLogic<Vector512<T>, T>
{
    public static bool IsAccelerated => Vector512.IsHardwareAccelerated;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Div(Vector512<T> a, Vector512<T> b) => a / b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Abs(Vector512<T> a) => Vector512.Abs(a);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Equal(Vector512<T> a, Vector512<T> b) => Vector512.Equals(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Less(Vector512<T> a, Vector512<T> b) => Vector512.LessThan(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> LessOrEqual(Vector512<T> a, Vector512<T> b) => Vector512.LessThanOrEqual(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Greater(Vector512<T> a, Vector512<T> b) => Vector512.GreaterThan(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> GreaterOrEqual(Vector512<T> a, Vector512<T> b) => Vector512.GreaterThanOrEqual(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> And(Vector512<T> a, Vector512<T> b) => a & b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Or(Vector512<T> a, Vector512<T> b) => a | b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> AndNot(Vector512<T> a, Vector512<T> b) => Vector512.AndNot(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector512<T> Select(Vector512<T> mask, Vector512<T> whenTrue, Vector512<T> whenFalse) =>
        Vector512.ConditionalSelect(mask, whenTrue, whenFalse);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static bool AllEqual(Vector512<T> a, Vector512<T> b) => Vector512.EqualsAll(a, b);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static ulong MaskBits(Vector512<T> mask) => mask.ExtractMostSignificantBits();

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static unsafe Vector512<T> WidenStrided(ref readonly float first, int stride)
    {
        var half = Vector256<T>.Count;
        if (typeof(T) == typeof(double) && Avx512F.IsSupported && Avx2.IsSupported && (long)stride * (Vector512<T>.Count - 1) <= int.MaxValue)
        {
            // One gather fetches sample i of all eight channels (the offsets fit in int, checked above).
            fixed (float* at = &first)
            {
                return Avx512F.ConvertToVector512Double(Avx2.GatherVector256(at, Vector256<int>.Indices * stride, 4)).As<double, T>();
            }
        }

        return Vector512.Create(
            Vector256Lanes<T>.WidenStrided(in first, stride),
            Vector256Lanes<T>.WidenStrided(in Unsafe.Add(ref Unsafe.AsRef(in first), half * stride), stride));
    }
}
