using HumWatch.Formats.Tests.Support;

namespace HumWatch.Formats.Tests.Edf;

/// <summary>Bad input: every error names the file and the problem (offsets per the EDF spec, Kemp et al. 1992).</summary>
public sealed class EdfValidationTests : IDisposable
{
    // The small EDF+C file has 2 EEG signals + 1 annotation signal: ns = 3, header 1024 bytes.
    private const int Ns = 3;
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    private RecordingFormatException OpenFails(string name, byte[] bytes, params string[] expected)
    {
        var path = _folder.Write(name, bytes);
        var ex = Assert.Throws<RecordingFormatException>(() => RecordingReader.Open(path).Dispose());
        Assert.StartsWith(path + ": ", ex.Message, StringComparison.Ordinal);
        Assert.Equal(path, ex.Path);
        foreach (var text in expected)
        {
            Assert.Contains(text, ex.Message, StringComparison.Ordinal);
        }

        return ex;
    }

    [Fact]
    public void Empty_file_is_rejected() => OpenFails("empty.edf", [], "empty file");

    [Fact]
    public void Random_bytes_with_edf_extension_are_not_an_edf_file()
    {
        var random = new Random(1234);
        var bytes = new byte[4096];
        random.NextBytes(bytes);
        bytes[0] = 0x7F;
        OpenFails("noise.edf", bytes, "not an EDF/BDF file", "version field");
    }

    [Fact]
    public void Random_bytes_with_unknown_extension_are_not_a_recognised_recording()
    {
        var random = new Random(99);
        var bytes = new byte[300];
        random.NextBytes(bytes);
        bytes[0] = 0x01;
        OpenFails("noise.dat", bytes, "not a recognised recording");
    }

    [Fact]
    public void Missing_file_is_reported_as_not_found()
    {
        var path = _folder.File("absent.edf");
        var ex = Assert.Throws<RecordingFormatException>(() => RecordingReader.Open(path));
        Assert.Equal(path + ": file not found", ex.Message);
    }

    [Fact]
    public void Header_shorter_than_256_bytes_is_a_truncated_header() =>
        OpenFails("short.edf", EdfBytes.SmallEdfPlus()[..100], "truncated header", "100 bytes");

    [Fact]
    public void Header_length_field_must_equal_256_times_ns_plus_1() =>
        OpenFails("hdrlen.edf", EdfBytes.Patch(EdfBytes.SmallEdfPlus(), 184, 8, "768"), "number of bytes in header (bytes 184-191) is 768", "256 × (3 + 1) = 1024");

    [Theory]
    [InlineData("0", "is 0; must be at least 1")]
    [InlineData("-2", "is -2; must be at least 1")]
    [InlineData("5000", "not a plausible recording")]
    [InlineData("x1", "'x1', not a whole number")]
    public void Number_of_signals_must_be_between_1_and_4096(string ns, string problem) =>
        OpenFails("ns.edf", EdfBytes.Patch(EdfBytes.SmallEdfPlus(), 252, 4, ns), "number of signals (bytes 252-255)", problem);

    [Fact]
    public void Negative_record_count_other_than_minus_one_is_rejected() =>
        OpenFails("count.edf", EdfBytes.Patch(EdfBytes.SmallEdfPlus(), 236, 8, "-5"), "number of data records (bytes 236-243) is -5");

    [Theory]
    [InlineData("0")]
    [InlineData("-1")]
    [InlineData("abc")]
    [InlineData("NaN")]
    public void Record_duration_must_be_a_positive_number(string duration) =>
        OpenFails("duration.edf", EdfBytes.Patch(EdfBytes.SmallEdfPlus(), 244, 8, duration), "duration of a data record (bytes 244-251)");

    [Theory]
    [InlineData("0", "is 0; must be at least 1")]
    [InlineData("-7", "is -7; must be at least 1")]
    [InlineData("40000000", "64 MiB")]
    public void Samples_per_record_must_be_positive_and_plausible(string samples, string problem) =>
        OpenFails("spr.edf", EdfBytes.Patch(EdfBytes.SmallEdfPlus(), EdfBytes.SignalFieldOffset(Ns, 8, 0), 8, samples), "signal 1 of 3 ('Fp1') number of samples in each data record", problem);

    [Fact]
    public void Sum_of_samples_per_record_above_64_MiB_is_rejected()
    {
        var bytes = EdfBytes.Patch(EdfBytes.SmallEdfPlus(), EdfBytes.SignalFieldOffset(Ns, 8, 0), 8, "20000000");
        bytes = EdfBytes.Patch(bytes, EdfBytes.SignalFieldOffset(Ns, 8, 1), 8, "20000000");
        OpenFails("bigrecord.edf", bytes, "a data record would be 80000", "64 MiB");
    }

    [Fact]
    public void Digital_maximum_must_exceed_digital_minimum() =>
        OpenFails("dig.edf", EdfBytes.Patch(EdfBytes.SmallEdfPlus(), EdfBytes.SignalFieldOffset(Ns, 6, 1), 8, "-32767"), "signal 2 of 3 ('Cz') digital maximum (-32767) must be greater than digital minimum (-32767)");

    [Fact]
    public void Digital_range_must_fit_16_bit_samples_in_edf() =>
        OpenFails("dig16.edf", EdfBytes.Patch(EdfBytes.SmallEdfPlus(), EdfBytes.SignalFieldOffset(Ns, 6, 0), 8, "40000"), "does not fit the 16-bit samples");

    [Fact]
    public void Physical_maximum_equal_to_minimum_is_rejected() =>
        OpenFails("phys.edf", EdfBytes.Patch(EdfBytes.SmallEdfPlus(), EdfBytes.SignalFieldOffset(Ns, 4, 0), 8, "-3276.7"), "signal 1 of 3 ('Fp1') physical maximum equals physical minimum");

    [Fact]
    public void Non_numeric_physical_minimum_is_named() =>
        OpenFails("physnan.edf", EdfBytes.Patch(EdfBytes.SmallEdfPlus(), EdfBytes.SignalFieldOffset(Ns, 3, 1), 8, "low"), "signal 2 of 3 ('Cz') physical minimum is 'low', not a number");

    [Fact]
    public void Truncated_file_is_an_error_before_reading_naming_expected_and_actual_size()
    {
        var full = EdfBytes.SmallEdfPlus(records: 4);
        var ex = OpenFails("cut.edf", full[..(full.Length - 100)], "truncated file (size shorter than the header promises)", $"expected {full.Length} bytes", $"found {full.Length - 100} bytes", "3 complete records");
        Assert.Contains("4 data records", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Non_ascii_byte_in_edf_plus_header_names_the_field()
    {
        var bytes = EdfBytes.SmallEdfPlus();
        bytes[10] = 0xE9;
        OpenFails("latin.edf", bytes, "non-ASCII byte 0xE9 in the local patient identification (bytes 8-87) field");
    }

    [Fact]
    public void Non_ascii_byte_in_an_edf_plus_signal_label_names_the_signal_and_field()
    {
        var bytes = EdfBytes.SmallEdfPlus();
        bytes[EdfBytes.SignalFieldOffset(Ns, 0, 1) + 2] = 0xB5;
        OpenFails("label.edf", bytes, "signal 2 of 3 label");
    }

    [Fact]
    public void Non_ascii_label_in_plain_edf_is_accepted()
    {
        var bytes = EdfBytes.SmallEdfPlus(kind: EdfFileKind.Edf);
        bytes[EdfBytes.SignalFieldOffset(2, 0, 0) + 3] = 0xE9; // "Fp1é" in Latin-1
        var path = _folder.Write("plain.edf", bytes);
        using var reader = RecordingReader.Open(path);
        Assert.Equal("Fp1é", reader.Info.Groups[0].Layout.Channels[0].Label);
    }

    [Fact]
    public void Trailing_bytes_after_the_last_record_are_ignored_with_a_warning()
    {
        var bytes = EdfBytes.SmallEdfPlus(records: 2).Concat(new byte[37]).ToArray();
        var path = _folder.Write("tail.edf", bytes);
        using var reader = RecordingReader.Open(path);
        Assert.Contains(reader.Info.Warnings, w => w.Contains("37 bytes after the last of the 2 data records ignored", StringComparison.Ordinal));
        Assert.Equal(2 * 256, reader.ReadChunks(10).Sum(c => c.GroupIndex == 0 ? c.Chunk.SamplesPerChannel : 0));
    }

    [Fact]
    public void Record_count_minus_one_is_derived_from_the_file_size()
    {
        var full = EdfBytes.SmallEdfPlus(records: 3);
        var bytes = EdfBytes.Patch(full, 236, 8, "-1");
        var path = _folder.Write("live.edf", bytes[..(bytes.Length - 10)]);
        using var reader = RecordingReader.Open(path);
        Assert.Equal(2.0, reader.Info.DurationSeconds);
        Assert.Contains(reader.Info.Warnings, w => w.Contains("still recording", StringComparison.Ordinal));
        Assert.Contains(reader.Info.Warnings, w => w.Contains("incomplete last data record", StringComparison.Ordinal));
        Assert.Equal(512, reader.ReadChunks().Where(c => c.GroupIndex == 0).Sum(c => c.Chunk.SamplesPerChannel));
    }

    [Fact]
    public void File_with_only_skipped_signals_lists_every_reason()
    {
        var bytes = EdfBytes.Patch(EdfBytes.SmallEdfPlus(), EdfBytes.SignalFieldOffset(Ns, 2, 0), 8, "degC");
        bytes = EdfBytes.Patch(bytes, EdfBytes.SignalFieldOffset(Ns, 0, 1), 16, "Status");
        OpenFails("noeeg.edf", bytes, "no analysable EEG signal", "'degC' is not a voltage", "2 'Status': trigger/status channel", "annotation signal");
    }

    [Fact]
    public void Empty_physical_dimension_is_assumed_uV_with_a_warning()
    {
        var bytes = EdfBytes.Patch(EdfBytes.SmallEdfPlus(), EdfBytes.SignalFieldOffset(Ns, 2, 0), 8, "");
        var path = _folder.Write("nodim.edf", bytes);
        using var reader = RecordingReader.Open(path);
        Assert.Equal(2, reader.Info.Groups[0].Layout.ChannelCount);
        Assert.Contains(reader.Info.Warnings, w => w.Contains("signal 1 ('Fp1') has no physical dimension; assumed µV", StringComparison.Ordinal));
    }

    [Fact]
    public void Chunk_length_outside_range_throws_naming_the_parameter()
    {
        var path = _folder.Write("ok.edf", EdfBytes.SmallEdfPlus());
        using var reader = RecordingReader.Open(path);
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => reader.ReadChunks(0));
        Assert.Equal("chunkSeconds", ex.ParamName);
    }
}

public sealed class RecordingReaderBoundaryTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void A_folder_is_not_a_recording()
    {
        var ex = Assert.Throws<RecordingFormatException>(() => RecordingReader.Open(_folder.Path));
        Assert.Equal(_folder.Path + ": is a folder, not a recording file", ex.Message);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(-1.0)]
    [InlineData(double.NaN)]
    public void Minimum_analysis_rate_must_be_positive(double rateHz)
    {
        var path = _folder.Write("ok.edf", EdfBytes.SmallEdfPlus());
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => RecordingReader.Open(path, new RecordingReadOptions { MinAnalysisRateHz = rateHz }));
        Assert.Equal(nameof(RecordingReadOptions.MinAnalysisRateHz), ex.ParamName);
    }

    [Fact]
    public void Bdf_digital_range_must_fit_24_bit_samples()
    {
        var bytes = EdfBytes.Patch(EdfBytes.SmallEdfPlus(kind: EdfFileKind.BdfPlusC), EdfBytes.SignalFieldOffset(3, 5, 0), 8, "-9000000");
        var path = _folder.Write("range.bdf", bytes);
        var ex = Assert.Throws<RecordingFormatException>(() => RecordingReader.Open(path));
        Assert.Contains("signal 1 of 3 ('Fp1') digital range -9000000..8388607 does not fit the 24-bit samples", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Bdf_plus_round_trips_through_the_reader()
    {
        var path = _folder.Write("ok.bdf", EdfBytes.SmallEdfPlus(records: 3, kind: EdfFileKind.BdfPlusC));
        using var reader = RecordingReader.Open(path);
        Assert.Equal("BDF+C", reader.Info.Format);
        var chunks = reader.ReadChunks().Select(c => c.Chunk).ToList();
        Assert.Equal([0L, 512L], chunks.Select(c => c.FirstSampleIndex));

        // Fp1 = 100·sin(2π·50·n/256) µV, 24-bit steps of ~0.03 µV.
        Assert.Equal(100 * Math.Sin(2 * Math.PI * 50 * 5 / 256.0), chunks[0].Channel(0)[5], 0.02);
    }
}
