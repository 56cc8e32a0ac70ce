using HumWatch.Formats.Tests.Support;

namespace HumWatch.Formats.Tests.Csv;

public sealed class CsvReaderTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void Semicolon_file_with_unit_suffixes_converts_to_uV_and_skips_non_voltage_columns()
    {
        using var reader = RecordingReader.Open(Fixtures.Csv("semicolon_256hz.csv"));
        var info = reader.Info;
        Assert.Equal("CSV", info.Format);
        Assert.Null(info.StartLocal);
        Assert.Equal(2.0, info.DurationSeconds, 9);
        var group = Assert.Single(info.Groups);
        Assert.Equal(256.0, group.Layout.SampleRateHz);
        Assert.Equal(["Fp1", "Cz"], group.Layout.Channels.Select(c => c.Label));
        Assert.Equal([1, 2], group.SignalIndices);
        var skipped = Assert.Single(info.Skipped);
        Assert.Equal(new SkippedSignal(3, "Temp", "unit 'degC' is not a voltage"), skipped);

        var chunk = Assert.Single(reader.ReadChunks(2.0)).Chunk;
        Assert.Equal(512, chunk.SamplesPerChannel);
        for (var i = 0; i < 512; i++)
        {
            var t = i / 256.0;

            // Fixture formulas (tests/fixtures/csv/README.md), printed to 3 and 6 decimals.
            Assert.Equal(25 * Math.Sin(2 * Math.PI * 50 * t), chunk.Channel(0)[i], 0.0006);
            Assert.Equal(0.01 * Math.Cos(2 * Math.PI * 10 * t) * 1000, chunk.Channel(1)[i], 0.0006);
        }
    }

    [Fact]
    public void Tab_separated_file_streams_in_chunks_with_consecutive_indices()
    {
        using var reader = RecordingReader.Open(Fixtures.Csv("tab_250hz.tsv"));
        Assert.Equal(250.0, reader.Info.Groups[0].Layout.SampleRateHz);
        var chunks = reader.ReadChunks(1.0).Select(c => c.Chunk).ToList();
        Assert.Equal([0L, 250L], chunks.Select(c => c.FirstSampleIndex));
        Assert.Equal([250, 50], chunks.Select(c => c.SamplesPerChannel));

        // The short last chunk is closed up: channel 1 starts right after channel 0's 50 samples.
        Assert.All(chunks[1].Channel(1).ToArray(), v => Assert.Equal(-5.5f, v));
        Assert.Equal(10 * Math.Sin(2 * Math.PI * 60 * 1.0), chunks[1].Channel(0)[0], 0.0001);
    }

    [Fact]
    public void Millisecond_time_column_and_volt_and_nanovolt_units_are_converted()
    {
        var path = _folder.WriteText("ms.csv", "time_ms,Cz (V),Pz [nV]\n0,0.000001,1000\n4,0.000002,2000\n8,0.000003,3000\n");
        using var reader = RecordingReader.Open(path);
        Assert.Equal(250.0, reader.Info.Groups[0].Layout.SampleRateHz);
        var chunk = reader.ReadChunks().Single().Chunk;
        Assert.Equal([1f, 2f, 3f], chunk.Channel(0).ToArray());
        Assert.Equal([1f, 2f, 3f], chunk.Channel(1).ToArray());
    }

    [Fact]
    public void NaN_samples_pass_through_for_the_fault_detector()
    {
        var path = _folder.WriteText("nan.csv", "time,Cz\n0,1\n0.01,NaN\n0.02,3\n");
        using var reader = RecordingReader.Open(path);
        var chunk = reader.ReadChunks().Single().Chunk;
        Assert.True(float.IsNaN(chunk.Channel(0)[1]));
    }

    private RecordingFormatException Fails(string name, string text, params string[] expected)
    {
        var path = _folder.WriteText(name, text);
        var ex = Assert.Throws<RecordingFormatException>(() =>
        {
            using var reader = RecordingReader.Open(path);
            _ = reader.ReadChunks().Count();
        });
        Assert.StartsWith(path + ": ", ex.Message, StringComparison.Ordinal);
        foreach (var e in expected)
        {
            Assert.Contains(e, ex.Message, StringComparison.Ordinal);
        }

        return ex;
    }

    [Fact]
    public void Empty_file_is_rejected() => Fails("empty.csv", "", "empty file");

    [Fact]
    public void Blank_lines_only_have_no_header_row() => Fails("blank.csv", "\n  \n", "empty file: no header row");

    [Fact]
    public void Header_only_is_rejected() => Fails("header.csv", "time,Cz\n", "header only: no data rows");

    [Fact]
    public void A_single_row_cannot_give_a_sample_rate() => Fails("one.csv", "time,Cz\n0,1\n", "only one data row");

    [Fact]
    public void Ragged_row_names_the_line() => Fails("ragged.csv", "time,Cz,Pz\n0,1,2\n0.01,1,2\n0.02,1\n", "line 4: 2 fields, but the header has 3 columns");

    [Fact]
    public void Extra_field_names_the_line() => Fails("extra.csv", "time,Cz\n0,1\n0.01,1,9\n", "line 3: 3 fields, but the header has 2 columns");

    [Fact]
    public void Non_number_names_line_and_column() => Fails("text.csv", "time,Fp1,Cz\n0,1,2\n0.01,1,abc\n", "line 3, column 3 ('Cz'): 'abc' is not a number");

    [Fact]
    public void Non_uniform_time_names_the_row() =>
        Fails("jitter.csv", "time,Cz\n0,1\n0.01,1\n0.02,1\n0.03,1\n0.045,1\n0.055,1\n", "line 6, column 1: time step 0.015 s differs from the sample interval", "by more than 0.1 %");

    [Fact]
    public void First_column_must_be_time() => Fails("notime.csv", "Fp1,Cz\n0,1\n1,2\n", "line 1, column 1: 'Fp1' is not a time column");

    [Fact]
    public void Mixed_separators_in_the_header_are_rejected() => Fails("mixed.csv", "time,Fp1;Cz\n0,1;2\n", "header mixes separators");

    [Fact]
    public void Time_that_does_not_increase_is_rejected() => Fails("back.csv", "time,Cz\n1,1\n0.5,1\n0,1\n", "does not increase");

    [Fact]
    public void Rate_below_the_analysis_minimum_is_rejected() => Fails("slow.csv", "time,Cz\n0,1\n1,1\n2,1\n", "sample rate 1 Hz", "below the analysis minimum of 25 Hz");

    [Fact]
    public void Unit_suffix_is_split_from_the_label()
    {
        Assert.Equal(("Fp1", "uV"), HumWatch.Formats.Csv.CsvRecordingReader.SplitUnit("Fp1 [uV]"));
        Assert.Equal(("Cz", "mV"), HumWatch.Formats.Csv.CsvRecordingReader.SplitUnit(" Cz (mV) "));
        Assert.Equal(("O1", null), HumWatch.Formats.Csv.CsvRecordingReader.SplitUnit("O1"));
    }
}

public sealed class CsvEncodingTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void Utf8_bom_crlf_line_ends_and_quoted_headers_are_accepted()
    {
        var path = _folder.File("bom.csv");
        File.WriteAllText(path, "\"time\",\"Fp1 [µV]\"\r\n0,1.5\r\n0.002,2.5\r\n0.004,3.5\r\n", new System.Text.UTF8Encoding(encoderShouldEmitUTF8Identifier: true));
        using var reader = RecordingReader.Open(path);
        Assert.Equal(500.0, reader.Info.Groups[0].Layout.SampleRateHz);
        Assert.Equal("Fp1", reader.Info.Groups[0].Layout.Channels[0].Label);
        Assert.Equal([1.5f, 2.5f, 3.5f], reader.ReadChunks().Single().Chunk.Channel(0).ToArray());
    }

    [Fact]
    public void Semicolon_file_may_use_decimal_commas()
    {
        var path = _folder.WriteText("comma.csv", "time;Cz\n0;1,25\n0,01;-2,5\n0,02;3\n");
        using var reader = RecordingReader.Open(path);
        Assert.Equal(100.0, reader.Info.Groups[0].Layout.SampleRateHz);
        Assert.Equal([1.25f, -2.5f, 3f], reader.ReadChunks().Single().Chunk.Channel(0).ToArray());
    }
}
