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
    public void First_column_must_be_time() =>
        Fails("notime.csv", "Fp1,Cz\n0,1\n1,2\n", "line 1, column 1: 'Fp1' is not a time column", "2 rows are too few", "headers seen: 'Fp1', 'Cz'");

    [Theory]
    [InlineData("Zeit (s);Fp1;Cz\n0;1,5;-2\n0,004;2,5;-3\n0,008;3,5;-4\n0,012;4,5;-5\n", "Fp1")]
    [InlineData("tiempo,Fp1,Cz\n0.000,1.5,-2\n0.004,2.5,-3\n0.008,3.5,-4\n0.012,4.5,-5\n", "Fp1")]
    [InlineData("Время\tFp1\tCz\n0.000\t1.5\t-2\n0.004\t2.5\t-3\n0.008\t3.5\t-4\n0.012\t4.5\t-5\n", "Fp1")]
    [InlineData(";Fp1;Cz\n0;1,5;-2\n0,004;2,5;-3\n0,008;3,5;-4\n0,012;4,5;-5\n", "Fp1")]
    [InlineData("\"\",\"O1\",\"Cz\"\n0,1.5,-2\n0.004,2.5,-3\n0.008,3.5,-4\n0.012,4.5,-5\n", "O1")]
    [InlineData("Fp2,O1,Cz\n10.000,1.5,-2\n10.004,2.5,-3\n10.008,3.5,-4\n10.012,4.5,-5\n", "O1")]
    public void A_first_column_of_steadily_increasing_seconds_is_time_whatever_its_header(string text, string firstChannel)
    {
        // 4 ms steps: 250 Hz, whether the header names the column in German, Spanish, Russian, not at all, or as a channel.
        var path = _folder.WriteText("any-header.csv", text);
        using var reader = RecordingReader.Open(path);
        var layout = reader.Info.Groups[0].Layout;
        Assert.Equal(250.0, layout.SampleRateHz);
        Assert.Equal([firstChannel, "Cz"], layout.Channels.Select(c => c.Label));
        var chunk = reader.ReadChunks().Single().Chunk;
        Assert.Equal([1.5f, 2.5f, 3.5f, 4.5f], chunk.Channel(0).ToArray());
        Assert.Equal([-2f, -3f, -4f, -5f], chunk.Channel(1).ToArray());
    }

    [Fact]
    public void Steps_printed_with_few_decimals_and_a_millisecond_unit_on_any_name_are_read()
    {
        // 256 Hz printed to whole ms: steps of 3 and 4 ms around 3.90625 ms, each within one unit of the last decimal;
        // 257 rows end on exactly 1000 ms.
        var rows = string.Concat(Enumerable.Range(0, 257).Select(i => $"{Math.Round(i * 1000 / 256.0)};{i}\n"));
        var path = _folder.WriteText("ms-any.csv", "Время [мс];Cz [mV]\n" + rows);
        using var reader = RecordingReader.Open(path);
        Assert.Equal(256.0, reader.Info.Groups[0].Layout.SampleRateHz);
        var cz = reader.ReadChunks().Single().Chunk.Channel(0).ToArray();
        Assert.Equal(257, cz.Length);
        Assert.Equal([0f, 1000f, 2000f], cz[..3]);
    }

    [Fact]
    public void A_unit_in_a_channel_header_still_converts_when_time_is_found_by_content()
    {
        var path = _folder.WriteText("units.csv", "Zeit (s);Cz [mV];Temp [degC]\n0;0,001;36,6\n0,002;0,002;36,6\n0,004;0,003;36,6\n");
        using var reader = RecordingReader.Open(path);
        Assert.Equal(500.0, reader.Info.Groups[0].Layout.SampleRateHz);
        Assert.Equal("Temp", Assert.Single(reader.Info.Skipped).Label);
        Assert.Equal([1f, 2f, 3f], reader.ReadChunks().Single().Chunk.Channel(0).ToArray());
    }

    [Fact]
    public void A_first_column_that_jumps_about_is_not_time_and_the_error_lists_the_headers() =>
        Fails("eeg-first.csv", "Fp1,Fp2,Cz\n3.5,1,2\n1.25,2,3\n7,3,4\n", "line 1, column 1: 'Fp1' is not a time column", "but line 3 has 1.25 after 3.5", "headers seen: 'Fp1', 'Fp2', 'Cz'");

    [Fact]
    public void Uneven_steps_in_the_first_rows_are_not_time() =>
        Fails("uneven.csv", "tiempo;Cz\n0;1\n0,004;1\n0,008;1\n0,02;1\n", "'tiempo' is not a time column", "but line 3 steps by 0.004 where the first rows step by 0.006666666667 on average", "headers seen: 'tiempo', 'Cz'");

    [Fact]
    public void Clock_times_in_the_first_column_are_not_seconds() =>
        Fails("clock.csv", "Uhrzeit;Cz\n12:00:00.000;1\n12:00:00.004;1\n12:00:00.008;1\n", "'Uhrzeit' is not a time column", "line 2 holds '12:00:00.000', not a number", "headers seen: 'Uhrzeit', 'Cz'");

    [Fact]
    public void A_voltage_unit_on_the_first_column_says_it_is_a_channel() =>
        Fails("volts.csv", "Fp1 [uV],Cz\n0,1\n1,2\n2,3\n", "its unit 'uV' is not a time unit", "headers seen: 'Fp1 [uV]', 'Cz'");

    [Fact]
    public void A_sample_counter_in_the_first_column_reads_as_1_Hz_and_says_so() =>
        Fails("counter.csv", "Sample,Cz\n0,1\n1,2\n2,3\n", "sample rate 1 Hz (taking column 1 'Sample' as time in seconds) is below the analysis minimum");

    [Fact]
    public void A_time_column_found_by_content_is_still_checked_row_by_row()
    {
        // The header is not read as time and only the first 1000 rows decide; a slip after them is caught on its line.
        var rows = string.Concat(Enumerable.Range(0, 1100).Select(i => string.Create(System.Globalization.CultureInfo.InvariantCulture, $"{(i * 0.004) + (i >= 1050 ? 0.002 : 0):0.000},1\n")));
        Fails("later-jitter.csv", "tiempo,Cz\n" + rows, "line 1052, column 1: time step 0.006 s differs");
    }

    [Fact]
    public void Mixed_separators_in_the_header_are_rejected() => Fails("mixed.csv", "time,Fp1;Cz\n0,1;2\n", "header mixes separators");

    [Fact]
    public void Time_that_does_not_increase_is_rejected() => Fails("back.csv", "time,Cz\n1,1\n0.5,1\n0,1\n", "does not increase");

    [Fact]
    public void Rate_below_the_analysis_minimum_is_rejected() => Fails("slow.csv", "time,Cz\n0,1\n1,1\n2,1\n", "sample rate 1 Hz", "below the analysis minimum of 25 Hz");

    [Fact]
    public void Unit_suffix_is_split_from_the_label()
    {
        Assert.Equal(("Fp1", "uV"), HumWatch.Formats.Csv.CsvText.SplitUnit("Fp1 [uV]"));
        Assert.Equal(("Cz", "mV"), HumWatch.Formats.Csv.CsvText.SplitUnit(" Cz (mV) "));
        Assert.Equal(("O1", null), HumWatch.Formats.Csv.CsvText.SplitUnit("O1"));
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
