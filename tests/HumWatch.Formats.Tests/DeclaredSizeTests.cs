using System.Globalization;
using System.Text;
using HumWatch.Formats.Edf;
using HumWatch.Formats.Tests.Support;

namespace HumWatch.Formats.Tests;

/// <summary>
/// A reader sizes its memory from what a file holds, never from what its header declares: hostile or broken headers
/// (10⁹ records, 1024 channels at 1 MHz, a line without end) get a typed error or a small buffer, and the bytes
/// allocated while reading stay near the file's own size (GC.GetAllocatedBytesForCurrentThread around the read).
/// </summary>
public sealed class DeclaredSizeTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void Edf_header_declaring_a_billion_records_is_refused_at_open_without_reading_them()
    {
        var edf = new RawEdf();
        edf.Signals.Add(new RawSignal("Fp1", 256));
        edf.Records.Add(edf.Record([new short[256]], ""));
        edf.Records.Add(edf.Record([new short[256]], ""));
        // The field has 8 characters; "1e9" is how a whole number that large fits (the reader takes whole numbers written so).
        var path = _folder.Write("billion.edf", edf.ToBytes(recordCount: "1e9"));

        var (ex, allocated) = Allocation.Measure(() => Assert.Throws<RecordingFormatException>(() => RecordingReader.Open(path).Dispose()));

        Assert.Equal(path, ex.Path);
        Assert.Contains("truncated file", ex.Problem, StringComparison.Ordinal);
        Assert.Contains("1000000000 data records", ex.Problem, StringComparison.Ordinal);
        Assert.True(allocated < 2 << 20, $"{allocated} bytes allocated to refuse a {new FileInfo(path).Length} byte file");
    }

    [Fact]
    public void Edf_record_of_1024_channels_at_1_MHz_is_refused_as_implausible()
    {
        var edf = new RawEdf();
        for (var c = 0; c < 1024; c++)
        {
            edf.Signals.Add(new RawSignal("E" + c.ToString(CultureInfo.InvariantCulture), 1_000_000));
        }

        var path = _folder.Write("wide.edf", edf.ToBytes(recordCount: "1"));
        var ex = Assert.Throws<RecordingFormatException>(() => RecordingReader.Open(path).Dispose());

        // 1024 × 1 000 000 samples × 2 bytes = 2 048 000 000 bytes per record.
        Assert.Contains("a data record would be 2048000000 bytes", ex.Problem, StringComparison.Ordinal);
    }

    [Fact]
    public void Edf_of_1024_channels_at_1_MHz_allocates_for_the_records_it_holds_not_for_the_declared_rate()
    {
        // One sample per signal in 1 µs records: 1 MHz. Two seconds of that would be a 8 GiB batch; the file holds 3 records.
        var edf = new RawEdf { RecordDuration = "0.000001" };
        for (var c = 0; c < 1024; c++)
        {
            edf.Signals.Add(new RawSignal("E" + c.ToString(CultureInfo.InvariantCulture), 1));
        }

        var samples = Enumerable.Range(0, 1024).Select(c => new[] { (short)c }).ToArray();
        for (var r = 0; r < 3; r++)
        {
            edf.Records.Add(edf.Record(samples, ""));
        }

        var path = _folder.Write("fast.edf", edf.ToBytes());
        var ((rateHz, samplesPerChannel), allocated) = Allocation.Measure(() =>
        {
            using var reader = RecordingReader.Open(path);
            var chunks = reader.ReadChunks(2.0).ToList();
            return (reader.Info.Groups[0].Layout.SampleRateHz, chunks.Sum(c => c.Chunk.SamplesPerChannel));
        });

        Assert.Equal(1e6, rateHz, 6);
        Assert.Equal(3, samplesPerChannel);
        Assert.True(allocated < 4 << 20, $"{allocated} bytes allocated to read a {new FileInfo(path).Length} byte file");
    }

    [Fact]
    public void Edf_record_duration_so_short_that_the_rate_is_infinite_is_refused_naming_the_signal()
    {
        // 4.9e-324 is the smallest double above 0; 256 samples in it overflow to an infinite rate.
        var edf = new RawEdf { RecordDuration = "4.9e-324" };
        edf.Signals.Add(new RawSignal("Fp1", 256));
        edf.Records.Add(edf.Record([new short[256]], ""));
        var path = _folder.Write("instant.edf", edf.ToBytes());

        var ex = Assert.Throws<RecordingFormatException>(() => RecordingReader.Open(path).Dispose());

        Assert.Equal("signal 1 of 1 ('Fp1') has 256 samples per data record of '4.9e-324' s, Infinity Hz; more than 1 MHz is not a plausible recording", ex.Problem);
    }

    [Fact]
    public void Edf_plus_d_record_starting_too_late_for_a_64_bit_sample_index_is_refused()
    {
        // 10^17 s at 256 Hz is 2.56·10^19 samples, past 2^63 ≈ 9.2·10^18.
        var edf = new RawEdf { Reserved = "EDF+D" };
        edf.Signals.Add(new RawSignal("Fp1", 256));
        edf.Signals.Add(RawSignal.Annotations());
        edf.Records.Add(edf.Record([new short[256]], "+0\u0014\u0014\0"));
        edf.Records.Add(edf.Record([new short[256]], "+100000000000000000\u0014\u0014\0"));
        var path = _folder.Write("far-future.edf", edf.ToBytes());

        using var reader = RecordingReader.Open(path);
        var ex = Assert.Throws<RecordingFormatException>(() => reader.ReadChunks().ToList());

        Assert.Equal("data record 2 starts at 1E+17 s, too late for a 64-bit sample index at 256 Hz", ex.Problem);
    }

    [Fact]
    public void Annotations_past_the_limit_are_checked_and_counted_but_not_kept()
    {
        const int Texts = EdfRecordingReader.MaxAnnotations + 500;

        // One TAL: the record's time-keeping annotation (empty text), then Texts one-letter annotations (EDF+ 2003 §2.2).
        var tal = "+0\u0014\u0014" + string.Concat(Enumerable.Repeat("a\u0014", Texts)) + "\0";
        var edf = new RawEdf { Reserved = "EDF+C" };
        edf.Signals.Add(new RawSignal("Fp1", 256));
        edf.Signals.Add(RawSignal.Annotations((tal.Length + 1) / 2));
        edf.Records.Add(edf.Record([new short[256]], tal));
        var path = _folder.Write("noisy-notes.edf", edf.ToBytes());

        using var reader = RecordingReader.Open(path);
        _ = reader.ReadChunks().ToList();

        Assert.Equal(EdfRecordingReader.MaxAnnotations, reader.Annotations.Count);
        Assert.Equal(500, reader.AnnotationsNotKept);
        Assert.All(reader.Annotations, a => Assert.Equal("a", a.Text));
    }

    [Fact]
    public void Csv_of_1024_channels_at_1_MHz_allocates_for_its_rows_not_for_the_rate()
    {
        var text = new StringBuilder("time");
        for (var c = 0; c < 1024; c++)
        {
            text.Append(",E").Append(c);
        }

        for (var row = 0; row < 3; row++)
        {
            text.Append('\n').Append((row * 1e-6).ToString("0.000000", CultureInfo.InvariantCulture));
            text.Append(',', 1).AppendJoin(',', Enumerable.Repeat("1.5", 1024));
        }

        var path = _folder.WriteText("fast.csv", text.ToString());
        var ((rateHz, samplesPerChannel), allocated) = Allocation.Measure(() =>
        {
            using var reader = RecordingReader.Open(path);
            var chunks = reader.ReadChunks(2.0).ToList();
            return (reader.Info.Groups[0].Layout.SampleRateHz, chunks.Sum(c => c.Chunk.SamplesPerChannel));
        });

        Assert.Equal(1e6, rateHz);
        Assert.Equal(3, samplesPerChannel);
        Assert.True(allocated < 4 << 20, $"{allocated} bytes allocated to read a {new FileInfo(path).Length} byte file");
    }

    [Fact]
    public void Csv_line_longer_than_the_limit_is_refused_before_it_is_held()
    {
        var path = _folder.File("one-line.csv");
        using (var file = new StreamWriter(path))
        {
            file.Write("time,Fp1\n0,");
            var digits = new string('7', 1 << 20);
            for (var i = 0; i < 24; i++)
            {
                file.Write(digits);
            }
        }

        var (ex, allocated) = Allocation.Measure(() => Assert.Throws<RecordingFormatException>(() => RecordingReader.Open(path).Dispose()));

        Assert.Equal(path, ex.Path);
        Assert.Equal("line 2 is longer than 1048576 characters; not a row of a text recording", ex.Problem);

        // The 1 Mi-character line buffer (2 MiB), its growth on the way there and the file buffers; not the 24 MiB line.
        Assert.True(allocated < 8 << 20, $"{allocated} bytes allocated to refuse a 24 MiB line");
    }

    [Fact]
    public void Csv_lines_end_at_lf_cr_or_crlf_as_text_lines_do()
    {
        var path = _folder.WriteText("mixed-breaks.csv", "time,Cz\r\n0,1\n0.004,2\r0.008,3\r\n\r\n0.012,4");
        using var reader = RecordingReader.Open(path);
        var chunk = Assert.Single(reader.ReadChunks()).Chunk;
        Assert.Equal(250, reader.Info.Groups[0].Layout.SampleRateHz);
        Assert.Equal([1f, 2f, 3f, 4f], chunk.Channel(0).ToArray());
    }

    [Fact]
    public void Csv_with_more_than_4096_channel_columns_is_refused()
    {
        var header = "time," + string.Join(',', Enumerable.Range(0, 4097).Select(c => "E" + c.ToString(CultureInfo.InvariantCulture)));
        var path = _folder.WriteText("too-wide.csv", header + "\n0," + string.Join(',', Enumerable.Repeat("1", 4097)) + "\n");
        var ex = Assert.Throws<RecordingFormatException>(() => RecordingReader.Open(path).Dispose());
        Assert.Equal("line 1: header has 4098 columns; more than 4096 channels is not a plausible recording", ex.Problem);
    }
}
