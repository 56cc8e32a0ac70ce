using HumWatch.Formats.Edf;
using HumWatch.Formats.Tests.Support;

namespace HumWatch.Formats.Tests.Edf;

public sealed class EdfWriterTests
{
    [Theory]
    [InlineData(EdfFileKind.Edf)]
    [InlineData(EdfFileKind.EdfPlusC)]
    [InlineData(EdfFileKind.Bdf)]
    [InlineData(EdfFileKind.BdfPlusC)]
    public void Written_samples_read_back_within_half_a_digital_step(EdfFileKind kind)
    {
        var bdf = kind is EdfFileKind.Bdf or EdfFileKind.BdfPlusC;
        var options = new EdfWriterOptions
        {
            Kind = kind,
            RecordDurationSeconds = 0.5,
            StartLocal = new DateTime(2025, 6, 30, 23, 59, 58),
            Signals =
            [
                new EdfWriterSignal("Fp1", 125, -1000, 1000, bdf ? -8388608 : -32768, bdf ? 8388607 : 32767) { Prefiltering = "HP:0.1Hz LP:100Hz" },
                new EdfWriterSignal("O2", 64, -2, 2, -2048, 2047) { PhysicalDimension = "mV" },
            ],
        };
        using var folder = new TempFolder();
        var path = folder.File("w.edf");
        var random = new Random(7);
        var written = new List<float>();
        using (var writer = new EdfWriter(path, options))
        {
            var record = new float[writer.SamplesPerRecord];
            for (var r = 0; r < 6; r++)
            {
                for (var i = 0; i < record.Length; i++)
                {
                    record[i] = i < 125 ? (float)((random.NextDouble() * 1800) - 900) : (float)((random.NextDouble() * 3.6) - 1.8);
                }

                written.AddRange(record);
                writer.WriteRecord(record);
            }

            if (kind is EdfFileKind.EdfPlusC or EdfFileKind.BdfPlusC)
            {
                writer.AddAnnotation(0.25, null, "Licht an");
            }
        }

        using var reader = RecordingReader.Open(path);
        Assert.Equal(new DateTime(2025, 6, 30, 23, 59, 58), reader.Info.StartLocal);
        Assert.Equal(3.0, reader.Info.DurationSeconds);
        Assert.Equal([250.0, 128.0], reader.Info.Groups.Select(g => g.Layout.SampleRateHz));
        Assert.Equal("HP:0.1Hz LP:100Hz", reader.Info.Prefiltering);
        var samples = LibedfReferenceTests.ReadAll(reader);
        var fp1Step = 2000.0 / (bdf ? 16777215 : 65535);
        var o2StepUv = 4000.0 / 4095;
        for (var r = 0; r < 6; r++)
        {
            for (var i = 0; i < 125; i++)
            {
                Assert.Equal(written[(r * 189) + i], samples["Fp1"][(r * 125) + i], (fp1Step / 2) + 1e-4);
            }

            for (var i = 0; i < 64; i++)
            {
                Assert.Equal(written[(r * 189) + 125 + i] * 1000, samples["O2"][(r * 64) + i], (o2StepUv / 2) + 1e-3);
            }
        }
    }

    [Fact]
    public void Annotations_are_written_into_the_next_records_in_order()
    {
        using var folder = new TempFolder();
        var path = folder.File("ann.edf");
        var options = new EdfWriterOptions { Signals = [EdfWriterSignal.Edf16("Cz", 256)], AnnotationBytesPerRecord = 64 };
        using (var writer = new EdfWriter(path, options))
        {
            writer.AddAnnotation(0.5, 1.25, "Fenster auf");
            writer.AddAnnotation(0.75, null, "Tür zu — Raum Nord");
            writer.AddAnnotation(1.5, 0, "x");
            for (var r = 0; r < 3; r++)
            {
                writer.WriteRecord(new float[256]);
            }

            Assert.Equal(0, writer.PendingAnnotationCount);
        }

        using var reader = RecordingReader.Open(path);
        Assert.Equal(3, reader.ReadChunks(1.0).Count());
        Assert.Equal(
            [new RecordingAnnotation(0.5, 1.25, "Fenster auf"), new RecordingAnnotation(0.75, null, "Tür zu — Raum Nord"), new RecordingAnnotation(1.5, 0, "x")],
            reader.Annotations);
    }

    [Fact]
    public void Out_of_range_values_clip_to_the_physical_limits()
    {
        using var folder = new TempFolder();
        var path = folder.File("clip.edf");
        using (var writer = new EdfWriter(path, new EdfWriterOptions { Kind = EdfFileKind.Edf, Signals = [EdfWriterSignal.Edf16("Cz", 32, 100)] }))
        {
            var record = new float[32];
            record[0] = 1e6f;
            record[1] = -1e6f;
            writer.WriteRecord(record);
        }

        using var reader = RecordingReader.Open(path);
        var chunk = reader.ReadChunks().Single().Chunk;
        Assert.Equal(100f, chunk.Channel(0)[0], 4);
        Assert.Equal(-100f, chunk.Channel(0)[1], 4);
        Assert.Equal(100.0, chunk.Layout.Channels[0].RangeMaxUv);
    }

    [Fact]
    public void Wrong_record_length_throws_naming_the_parameter()
    {
        using var ms = new MemoryStream();
        using var writer = new EdfWriter(ms, new EdfWriterOptions { Signals = [EdfWriterSignal.Edf16("Cz", 10)] });
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => writer.WriteRecord(new float[9]));
        Assert.Equal("physical", ex.ParamName);
    }

    [Fact]
    public void Digital_range_beyond_16_bits_is_refused_for_edf()
    {
        using var ms = new MemoryStream();
        var options = new EdfWriterOptions { Kind = EdfFileKind.Edf, Signals = [new EdfWriterSignal("Cz", 10, -1, 1, -40000, 40000)] };
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new EdfWriter(ms, options));
        Assert.Equal("options", ex.ParamName);
    }
}
