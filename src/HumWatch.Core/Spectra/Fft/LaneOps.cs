using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace HumWatch.Core.Spectra.Fft;

/// <summary>
/// Arithmetic on one "lane pack" of the structure-of-arrays FFT: a scalar (one channel) or a vector (one channel per
/// lane) of <typeparamref name="TScalar"/> (double or float). The FFT stages and the power steps are generic over this,
/// so one copy of the butterflies serves every width and precision; the JIT specialises each struct.
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
}

/// <summary>One channel per pack: plain doubles, the fallback when Vector256 is not hardware accelerated.</summary>
internal readonly struct ScalarLanes : ILaneOps<double, double>
{
    public static int Lanes => 1;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double Splat(double value) => value;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double Add(double a, double b) => a + b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double Sub(double a, double b) => a - b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double Mul(double a, double b) => a * b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double MulAdd(double a, double b, double c) => (a * b) + c;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double NegMulAdd(double a, double b, double c) => c - (a * b);
}

/// <summary>Four channels per pack (lane c = channel c of the group), float64.</summary>
internal readonly struct Vector256Lanes : ILaneOps<Vector256<double>, double>
{
    public static int Lanes => Vector256<double>.Count;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<double> Splat(double value) => Vector256.Create(value);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<double> Add(Vector256<double> a, Vector256<double> b) => a + b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<double> Sub(Vector256<double> a, Vector256<double> b) => a - b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<double> Mul(Vector256<double> a, Vector256<double> b) => a * b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<double> MulAdd(Vector256<double> a, Vector256<double> b, Vector256<double> c) =>
        Fma.IsSupported ? Fma.MultiplyAdd(a, b, c) : (a * b) + c;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<double> NegMulAdd(Vector256<double> a, Vector256<double> b, Vector256<double> c) =>
        Fma.IsSupported ? Fma.MultiplyAddNegated(a, b, c) : c - (a * b);
}

/// <summary>One channel per pack, float32: the fallback of the float32 kernel when Vector256 is not hardware accelerated.</summary>
internal readonly struct SingleScalarLanes : ILaneOps<float, float>
{
    public static int Lanes => 1;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static float Splat(float value) => value;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static float Add(float a, float b) => a + b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static float Sub(float a, float b) => a - b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static float Mul(float a, float b) => a * b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static float MulAdd(float a, float b, float c) => (a * b) + c;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static float NegMulAdd(float a, float b, float c) => c - (a * b);
}

/// <summary>Eight channels per pack (lane c = channel c of the group), float32.</summary>
internal readonly struct Vector256SingleLanes : ILaneOps<Vector256<float>, float>
{
    public static int Lanes => Vector256<float>.Count;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<float> Splat(float value) => Vector256.Create(value);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<float> Add(Vector256<float> a, Vector256<float> b) => a + b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<float> Sub(Vector256<float> a, Vector256<float> b) => a - b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<float> Mul(Vector256<float> a, Vector256<float> b) => a * b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<float> MulAdd(Vector256<float> a, Vector256<float> b, Vector256<float> c) =>
        Fma.IsSupported ? Fma.MultiplyAdd(a, b, c) : (a * b) + c;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<float> NegMulAdd(Vector256<float> a, Vector256<float> b, Vector256<float> c) =>
        Fma.IsSupported ? Fma.MultiplyAddNegated(a, b, c) : c - (a * b);
}
