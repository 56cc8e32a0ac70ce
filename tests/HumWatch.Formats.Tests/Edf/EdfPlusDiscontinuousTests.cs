using HumWatch.Formats.Tests.Support;

namespace HumWatch.Formats.Tests.Edf;

/// <summary>EDF+D built byte by byte per the EDF+ spec §2 (libedf 1.23 does not write discontinuous files).</summary>
public sealed class EdfPlusDiscontinuousTests
{
    private static RawEdf Discontinuous(params (string Onset, string Extra)[] records)
    {
        var edf = new RawEdf { Reserved = "EDF+D" };
        edf.Signals.Add(new RawSignal("Cz", 32));
        edf.Signals.Add(RawSignal.Annotations());
        short value = 0;
        foreach (var (onset, extra) in records)
        {
            var samples = new short[32];
            for (var i = 0; i < samples.Length; i++)
            {
                samples[i] = value++;
            }

            // EDF+ §2.2.4: each record starts with a time-keeping TAL "+onset" 0x14 0x14 0x00.
            edf.Records.Add(edf.Record([samples], $"+{onset}\u0014\u0014\0{extra}"));
        }

        return edf;
    }

    [Fact]
    public void A_gap_between_records_shows_as_a_jump_in_first_sample_index()
    {
        using var folder = new TempFolder();
        var edf = Discontinuous(("0", ""), ("1", ""), ("5", "+5.5\u00152\u0014Gap end\u0014\0"));
        var path = folder.Write("gap.edf", edf.ToBytes());
        using var reader = RecordingReader.Open(path);

        Assert.Equal("EDF+D", reader.Info.Format);
        var chunks = reader.ReadChunks(2.0).Select(c => c.Chunk).ToList();

        // 32 Hz: records at 0 s and 1 s form one contiguous 2 s chunk; the record at 5 s starts at sample 5 × 32.
        Assert.Equal([0L, 160L], chunks.Select(c => c.FirstSampleIndex));
        Assert.Equal([64, 32], chunks.Select(c => c.SamplesPerChannel));

        // Scaling: phys = -3276.8 + (d + 32768)·6553.5/65535 = 0.1·d + 0 (EDF spec formula).
        Assert.Equal(6.4f, chunks[1].Channel(0)[0], 4);
        var annotation = Assert.Single(reader.Annotations);
        Assert.Equal(new RecordingAnnotation(5.5, 2, "Gap end"), annotation);
    }

    [Fact]
    public void A_record_that_starts_before_the_previous_one_ends_is_an_error_naming_the_record()
    {
        using var folder = new TempFolder();
        var path = folder.Write("overlap.edf", Discontinuous(("0", ""), ("0.5", "")).ToBytes());
        using var reader = RecordingReader.Open(path);

        var ex = Assert.Throws<RecordingFormatException>(() => reader.ReadChunks().ToList());
        Assert.StartsWith(path + ": ", ex.Message, StringComparison.Ordinal);
        Assert.Contains("data record 2", ex.Message, StringComparison.Ordinal);
        Assert.Contains("before the previous record ends", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_record_without_time_keeping_annotation_is_an_error_in_edf_plus_d()
    {
        using var folder = new TempFolder();
        var edf = Discontinuous(("0", ""));
        edf.Records.Add(edf.Record([new short[32]], ""));
        var path = folder.Write("nokeeping.edf", edf.ToBytes());
        using var reader = RecordingReader.Open(path);

        var ex = Assert.Throws<RecordingFormatException>(() => reader.ReadChunks().ToList());
        Assert.Contains("data record 2 of 2 has no time-keeping annotation", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_malformed_tal_is_an_error_naming_record_and_signal()
    {
        using var folder = new TempFolder();
        var edf = Discontinuous(("0", "5\u0014oops\u0014\0"));
        var path = folder.Write("badtal.edf", edf.ToBytes());
        using var reader = RecordingReader.Open(path);

        var ex = Assert.Throws<RecordingFormatException>(() => reader.ReadChunks().ToList());
        Assert.Contains("data record 1, annotation signal 2 ('EDF Annotations'): TAL 2", ex.Message, StringComparison.Ordinal);
    }
}
