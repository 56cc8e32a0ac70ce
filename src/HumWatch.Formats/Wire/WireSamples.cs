using System.Buffers.Binary;
using System.Numerics;
using System.Runtime.InteropServices;

namespace HumWatch.Formats.Wire;

/// <summary>Frame 2: float32 little-endian samples, converted between the wire unit and µV.</summary>
internal static class WireSamples
{
    /// <summary>µV per unit on the wire.</summary>
    public static double Scale(WireUnit unit) => unit switch
    {
        WireUnit.Millivolts => 1e3,
        WireUnit.Volts => 1e6,
        _ => 1.0,
    };

    /// <summary>Copies and scales samples to µV; returns the flat index of the first non-finite value, or -1.</summary>
    public static int Read(ReadOnlySpan<byte> source, Span<float> destination, double scale)
    {
        if (BitConverter.IsLittleEndian)
        {
            MemoryMarshal.Cast<byte, float>(source).CopyTo(destination);
        }
        else
        {
            for (var k = 0; k < destination.Length; k++)
            {
                destination[k] = BinaryPrimitives.ReadSingleLittleEndian(source.Slice(k * 4, 4));
            }
        }

        // 1000 and 1e6 are exact in float32 and a float × float product is exact in double, so one float multiply
        // rounds exactly like multiplying in double and rounding once.
        var factor = (float)scale;
        var scaleNeeded = factor != 1f;
        var i = 0;
        if (Vector.IsHardwareAccelerated && destination.Length >= Vector<float>.Count)
        {
            var vectors = MemoryMarshal.Cast<float, Vector<float>>(destination);
            var scaleVector = new Vector<float>(factor);

            // x − x is 0 for every finite x and NaN for NaN or ±∞, so one sum tells whether any value is non-finite.
            var check = Vector<float>.Zero;
            for (var v = 0; v < vectors.Length; v++)
            {
                var value = scaleNeeded ? vectors[v] * scaleVector : vectors[v];
                vectors[v] = value;
                check += value - value;
            }

            i = vectors.Length * Vector<float>.Count;
            if (!Vector.EqualsAll(check, Vector<float>.Zero))
            {
                return FirstNonFinite(destination);
            }
        }

        for (; i < destination.Length; i++)
        {
            var value = scaleNeeded ? destination[i] * factor : destination[i];
            if (!float.IsFinite(value))
            {
                return i;
            }

            destination[i] = value;
        }

        return -1;
    }

    /// <summary>Writes µV samples converted to <paramref name="unit"/> as float32 little-endian; returns the bytes written.</summary>
    public static int Write(ReadOnlySpan<float> samplesUv, Span<byte> destination, WireUnit unit)
    {
        var bytes = samplesUv.Length * 4;
        if (destination.Length < bytes)
        {
            throw new ArgumentOutOfRangeException(nameof(destination), destination.Length, $"Needs at least {bytes} bytes (4 per sample).");
        }

        var inverse = 1.0 / Scale(unit);
        for (var i = 0; i < samplesUv.Length; i++)
        {
            var value = inverse == 1.0 ? samplesUv[i] : (float)(samplesUv[i] * inverse);
            BinaryPrimitives.WriteSingleLittleEndian(destination.Slice(i * 4, 4), value);
        }

        return bytes;
    }

    private static int FirstNonFinite(ReadOnlySpan<float> samples)
    {
        for (var i = 0; i < samples.Length; i++)
        {
            if (!float.IsFinite(samples[i]))
            {
                return i;
            }
        }

        return -1;
    }
}
