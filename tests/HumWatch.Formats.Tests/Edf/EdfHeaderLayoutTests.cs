using System.Text;
using HumWatch.Formats.Edf;
using HumWatch.Formats.Tests.Support;

namespace HumWatch.Formats.Tests.Edf;

/// <summary>Byte layout of written files and the scaling formula, per the EDF spec (Kemp et al. 1992) and EDF+ (Kemp &amp; Olivan 2003).</summary>
public sealed class EdfHeaderLayoutTests
{
    private static string Ascii(byte[] bytes, int offset, int width) => Encoding.ASCII.GetString(bytes, offset, width);

    [Fact]
    public void Edf_plus_writer_puts_every_fixed_field_at_its_spec_offset()
    {
        var bytes = EdfBytes.SmallEdfPlus(records: 4);
        Assert.Equal("0       ", Ascii(bytes, 0, 8)); // EDF spec: version "0" + 7 spaces
        Assert.StartsWith("X X X X", Ascii(bytes, 8, 80), StringComparison.Ordinal); // EDF+ 2003: patient field, X = unknown
        Assert.StartsWith("Startdate 01-JAN-2001 ", Ascii(bytes, 88, 80), StringComparison.Ordinal); // EDF+ 2003: recording field
        Assert.Equal("01.01.01", Ascii(bytes, 168, 8)); // EDF spec: dd.mm.yy
        Assert.Equal("00.00.00", Ascii(bytes, 176, 8)); // EDF spec: hh.mm.ss
        Assert.Equal("1024    ", Ascii(bytes, 184, 8)); // EDF spec: 256·(ns+1), ns = 3
        Assert.StartsWith("EDF+C", Ascii(bytes, 192, 44), StringComparison.Ordinal); // EDF+ 2003: reserved field
        Assert.Equal("4       ", Ascii(bytes, 236, 8)); // EDF spec: number of data records
        Assert.Equal("1       ", Ascii(bytes, 244, 8)); // EDF spec: record duration, s
        Assert.Equal("3   ", Ascii(bytes, 252, 4)); // EDF spec: ns
    }

    [Fact]
    public void Per_signal_fields_are_stored_field_by_field_at_spec_offsets()
    {
        var bytes = EdfBytes.SmallEdfPlus();
        const int ns = 3;

        // EDF spec: labels at 256 (16 each), dimension at 256+96ns, samples per record at 256+216ns.
        Assert.Equal("Fp1             ", Ascii(bytes, 256, 16));
        Assert.Equal("Cz              ", Ascii(bytes, 256 + 16, 16));
        Assert.Equal("EDF Annotations ", Ascii(bytes, 256 + 32, 16)); // EDF+ 2003: annotation signal label
        Assert.Equal("uV      ", Ascii(bytes, 256 + (96 * ns), 8));
        Assert.Equal("-3276.7 ", Ascii(bytes, 256 + (104 * ns), 8));
        Assert.Equal("3276.7  ", Ascii(bytes, 256 + (112 * ns), 8));
        Assert.Equal("-32767  ", Ascii(bytes, 256 + (120 * ns), 8));
        Assert.Equal("32767   ", Ascii(bytes, 256 + (128 * ns), 8));
        Assert.Equal("256     ", Ascii(bytes, 256 + (216 * ns), 8));
        Assert.Equal("256     ", Ascii(bytes, 256 + (216 * ns) + 8, 8));

        // File = header + records × (2 bytes × samples per record, all signals).
        var annotationSamples = int.Parse(Ascii(bytes, 256 + (216 * ns) + 16, 8).Trim(), System.Globalization.CultureInfo.InvariantCulture);
        Assert.Equal(1024 + (4 * 2 * (256 + 256 + annotationSamples)), bytes.Length);

        // EDF+ 2003 §2.2.4: the first TAL of record 1 is the time keeping "+0" 0x14 0x14 0x00.
        var annotationStart = 1024 + (2 * 512);
        Assert.Equal("+0\u0014\u0014\0"u8.ToArray(), bytes[annotationStart..(annotationStart + 5)]);
    }

    [Fact]
    public void Bdf_writer_marks_version_and_reserved_field_and_stores_24_bit_little_endian_twos_complement()
    {
        var options = new EdfWriterOptions
        {
            Kind = EdfFileKind.Bdf,
            Signals = [new EdfWriterSignal("A1", 2, -8388608, 8388607, -8388608, 8388607)],
        };
        using var ms = new MemoryStream();
        using (var writer = new EdfWriter(ms, options, leaveOpen: true))
        {
            writer.WriteRecord([-2f, 70000f]);
        }

        var bytes = ms.ToArray();
        Assert.Equal(0xFF, bytes[0]); // BDF: version byte 0 = 255, then "BIOSEMI"
        Assert.Equal("BIOSEMI", Ascii(bytes, 1, 7));
        Assert.StartsWith("24BIT", Ascii(bytes, 192, 44), StringComparison.Ordinal); // BDF: reserved "24BIT"
        Assert.Equal(512 + 6, bytes.Length);

        // libedf 1.23 edflib.h: "One sample equals 3 bytes, order is little endian … second's complement".
        Assert.Equal(new byte[] { 0xFE, 0xFF, 0xFF, 0x70, 0x11, 0x01 }, bytes[512..]);
    }

    [Fact]
    public void Physical_value_follows_the_edf_scaling_formula()
    {
        // EDF spec: physical = phys_min + (digital − dig_min)·(phys_max − phys_min)/(dig_max − dig_min).
        var edf = new RawEdf();
        edf.Signals.Add(new RawSignal("Cz", 32, "uV", "-500", "500", "-2048", "2047"));
        var samples = new short[32];
        samples[0] = 1000;
        samples[1] = -2048;
        samples[2] = 2047;
        edf.Records.Add(edf.Record([samples], ""));
        using var folder = new TempFolder();
        using var reader = RecordingReader.Open(folder.Write("scale.edf", edf.ToBytes()), new RecordingReadOptions { MinAnalysisRateHz = 1 });
        var chunk = reader.ReadChunks().Single().Chunk;

        Assert.Equal(-500 + ((1000 + 2048) * 1000.0 / 4095), chunk.Channel(0)[0], 3); // = 244.2002 µV
        Assert.Equal(-500f, chunk.Channel(0)[1]);
        Assert.Equal(500f, chunk.Channel(0)[2]);
        Assert.Equal(-500 + (2048 * 1000.0 / 4095), chunk.Channel(0)[3], 3);
    }

    [Theory]
    [InlineData("14.03.24", "09.26.53", 2024)]
    [InlineData("31.12.85", "23.59.59", 1985)]
    [InlineData("01.01.84", "00.00.00", 2084)]
    public void Start_date_uses_the_edf_plus_two_digit_year_rule(string date, string time, int year)
    {
        // EDF+ 2003: yy 85–99 → 1985–1999, 00–84 → 2000–2084.
        var start = EdfHeader.ParseStart(date, time, plusRecordingId: null);
        Assert.NotNull(start);
        Assert.Equal(year, start.Value.Year);
    }

    [Fact]
    public void Edf_plus_recording_field_startdate_gives_the_four_digit_year()
    {
        // EDF+ 2003: after 2084 the header says "yy"-style and the recording field's Startdate is authoritative.
        var start = EdfHeader.ParseStart("02.03.02", "10.00.00", "Startdate 02-MAR-2102 X X X");
        Assert.Equal(new DateTime(2102, 3, 2, 10, 0, 0), start);
    }

    [Fact]
    public void Unparseable_start_is_unknown_not_an_error()
    {
        var edf = new RawEdf { StartDate = "xx.yy.zz" };
        edf.Signals.Add(new RawSignal("Cz", 32));
        edf.Records.Add(edf.Record([new short[32]], ""));
        using var folder = new TempFolder();
        using var reader = RecordingReader.Open(folder.Write("nodate.edf", edf.ToBytes()));
        Assert.Null(reader.Info.StartLocal);
        Assert.Contains(reader.Info.Warnings, w => w.Contains("start unknown", StringComparison.Ordinal));
    }
}
