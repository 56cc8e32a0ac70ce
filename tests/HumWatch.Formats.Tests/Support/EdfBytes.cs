using System.Text;
using HumWatch.Formats.Edf;

namespace HumWatch.Formats.Tests.Support;

/// <summary>Builds and patches EDF bytes at the offsets of the EDF spec (Kemp et al. 1992).</summary>
public static class EdfBytes
{
    /// <summary>A valid small file from <see cref="EdfWriter"/>: EDF+C, Fp1 and Cz at 256 Hz, 4 records of 1 s.</summary>
    public static byte[] SmallEdfPlus(int records = 4, EdfFileKind kind = EdfFileKind.EdfPlusC)
    {
        var bdf = kind is EdfFileKind.Bdf or EdfFileKind.BdfPlusC;
        var options = new EdfWriterOptions
        {
            Kind = kind,
            Signals = bdf
                ? [EdfWriterSignal.Bdf24("Fp1", 256), EdfWriterSignal.Bdf24("Cz", 256)]
                : [EdfWriterSignal.Edf16("Fp1", 256), EdfWriterSignal.Edf16("Cz", 256)],
        };
        using var ms = new MemoryStream();
        using (var writer = new EdfWriter(ms, options, leaveOpen: true))
        {
            var record = new float[512];
            for (var r = 0; r < records; r++)
            {
                for (var i = 0; i < record.Length; i++)
                {
                    record[i] = (float)(100 * Math.Sin((2 * Math.PI * 50 * ((r * 256) + (i % 256)) / 256.0) + (i < 256 ? 0 : 1)));
                }

                writer.WriteRecord(record);
            }
        }

        return ms.ToArray();
    }

    /// <summary>Overwrites a header field with <paramref name="text"/>, left-justified and space-padded.</summary>
    public static byte[] Patch(byte[] bytes, int offset, int width, string text)
    {
        var copy = (byte[])bytes.Clone();
        var field = Encoding.Latin1.GetBytes(text.PadRight(width));
        Assert.Equal(width, field.Length);
        field.CopyTo(copy, offset);
        return copy;
    }

    /// <summary>Offset of signal <paramref name="signal"/>'s entry in per-signal field block <paramref name="field"/> (0 = label … 8 = samples per record).</summary>
    public static int SignalFieldOffset(int ns, int field, int signal)
    {
        int[] widths = [16, 80, 8, 8, 8, 8, 8, 80, 8, 32];
        var offset = 256;
        for (var f = 0; f < field; f++)
        {
            offset += widths[f] * ns;
        }

        return offset + (widths[field] * signal);
    }
}
