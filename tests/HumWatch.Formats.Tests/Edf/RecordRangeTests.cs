using HumWatch.Formats.Edf;
using HumWatch.Formats.Tests.Support;

namespace HumWatch.Formats.Tests.Edf;

/// <summary>Reading a run of records on its own (used to check one file on several threads) and the vectorised 16-bit decode.</summary>
public sealed class RecordRangeTests
{
    [Theory]
    [InlineData(0, 10)]
    [InlineData(3, 4)]
    [InlineData(7, 5)]
    [InlineData(11, 1)]
    public void A_record_range_reads_the_same_samples_and_indices_as_the_whole_file(int firstRecord, int recordCount)
    {
        using var folder = new TempFolder();
        var path = WriteTwoRateFile(folder.File("range.edf"), records: 12);

        var whole = ReadAll(path, reader => reader.ReadChunks(1.5));
        var range = ReadAll(path, reader => ((IRecordRangeReader)reader).ReadRecordRange(firstRecord, recordCount, 1.5));

        foreach (var (group, perRecord) in new[] { (0, 125), (1, 64) })
        {
            var start = (long)firstRecord * perRecord;
            var count = recordCount * perRecord;
            Assert.Equal(start, range[group].First);
            Assert.Equal(count, range[group].Samples[0].Count);
            for (var c = 0; c < range[group].Samples.Length; c++)
            {
                Assert.Equal(whole[group].Samples[c].Skip((int)start).Take(count), range[group].Samples[c]);
            }
        }
    }

    [Fact]
    public void The_range_reader_knows_the_record_grid()
    {
        using var folder = new TempFolder();
        var path = WriteTwoRateFile(folder.File("grid.edf"), records: 12);
        using var reader = RecordingReader.Open(path);
        var ranges = Assert.IsAssignableFrom<IRecordRangeReader>(reader);
        Assert.True(ranges.CanReadRanges);
        Assert.Equal(12, ranges.RecordCount);
        Assert.Equal(0.5, ranges.RecordDurationSeconds);
        Assert.Equal([125, 64], ranges.SamplesPerRecord);
    }

    [Theory]
    [InlineData(-1, 2)]
    [InlineData(0, 0)]
    [InlineData(10, 3)]
    public void A_range_outside_the_file_is_refused(long firstRecord, long recordCount)
    {
        using var folder = new TempFolder();
        var path = WriteTwoRateFile(folder.File("outside.edf"), records: 12);
        using var reader = RecordingReader.Open(path);
        Assert.Throws<ArgumentOutOfRangeException>(() => ((IRecordRangeReader)reader).ReadRecordRange(firstRecord, recordCount));
    }

    [Fact]
    public void A_range_chunk_is_lent_until_its_buffer_is_refilled_while_whole_file_chunks_stay_the_callers()
    {
        using var folder = new TempFolder();
        var path = WriteTwoRateFile(folder.File("loan.edf"), records: 6);
        using var reader = RecordingReader.Open(path);

        // 0.5 s records in 1 s chunks: group 0 yields a chunk every second record, then the range reuses its buffer.
        using var range = ((IRecordRangeReader)reader).ReadRecordRange(0, 6, 1.0).GetEnumerator();
        Assert.True(range.MoveNext());
        var lent = range.Current.Chunk;
        var firstSample = lent.SamplesUv[0];
        Assert.True(range.MoveNext()); // group 1 of the same records: group 0's buffer is not touched yet
        Assert.Equal(firstSample, lent.SamplesUv[0]);
        Assert.True(range.MoveNext()); // the next records went into the buffer first

        Assert.True(lent.IsReleased);
        Assert.Throws<ObjectDisposedException>(() => lent.SamplesUv[0]);
        Assert.False(range.Current.Chunk.IsReleased);

        var kept = reader.ReadChunks(1.0).Select(c => c.Chunk).ToList();
        Assert.All(kept, c => Assert.False(c.IsReleased));
        Assert.Equal(firstSample, kept[0].SamplesUv[0]);
    }

    [Fact]
    public void A_discontinuous_file_refuses_ranges_and_says_why()
    {
        using var folder = new TempFolder();
        var path = WriteTwoRateFile(folder.File("gaps.edf"), records: 4);

        // EDF+ spec §2.1.3: the reserved field (byte 192) reads "EDF+D" for a file that may have gaps.
        using (var file = new FileStream(path, FileMode.Open, FileAccess.Write))
        {
            file.Position = 192;
            file.Write("EDF+D"u8);
        }

        using var reader = RecordingReader.Open(path);
        var ranges = (IRecordRangeReader)reader;
        Assert.False(ranges.CanReadRanges);
        var error = Assert.Throws<InvalidOperationException>(() => ranges.ReadRecordRange(0, 1));
        Assert.Contains("gaps", error.Message, StringComparison.Ordinal);
        Assert.Contains(path, error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Vectorised_int16_decoding_equals_the_scalar_edf_scaling_bit_for_bit()
    {
        var random = new Random(41);
        for (var length = 0; length < 70; length++)
        {
            var digital = new short[length];
            for (var i = 0; i < length; i++)
            {
                digital[i] = i switch
                {
                    0 => short.MinValue,
                    1 => short.MaxValue,
                    _ => (short)random.Next(short.MinValue, short.MaxValue + 1),
                };
            }

            var scale = (random.NextDouble() * 0.2) + 1e-3;
            var offset = (random.NextDouble() * 10) - 5;
            var decoded = new float[length];
            Int16Decoder.Decode(digital, decoded, scale, offset);
            for (var i = 0; i < length; i++)
            {
                // EDF spec (1992) §"data record": physical = digital·gain + offset; rounded once to float.
                Assert.Equal(BitConverter.SingleToInt32Bits((float)((digital[i] * scale) + offset)), BitConverter.SingleToInt32Bits(decoded[i]));
            }
        }
    }

    private static string WriteTwoRateFile(string path, int records)
    {
        var options = new EdfWriterOptions
        {
            RecordDurationSeconds = 0.5,
            Signals = [EdfWriterSignal.Edf16("Fp1", 125), EdfWriterSignal.Edf16("Fp2", 125), EdfWriterSignal.Edf16("Pz", 64)],
        };
        var random = new Random(19);
        using var writer = new EdfWriter(path, options);
        var record = new float[writer.SamplesPerRecord];
        for (var r = 0; r < records; r++)
        {
            for (var i = 0; i < record.Length; i++)
            {
                record[i] = (float)((random.NextDouble() * 400) - 200);
            }

            writer.WriteRecord(record);
        }

        return path;
    }

    private static (long First, List<float>[] Samples)[] ReadAll(string path, Func<IRecordingReader, IEnumerable<GroupChunk>> read)
    {
        using var reader = RecordingReader.Open(path);
        var groups = reader.Info.Groups;
        var result = new (long First, List<float>[] Samples)[groups.Count];
        for (var g = 0; g < groups.Count; g++)
        {
            result[g] = (-1, [.. Enumerable.Range(0, groups[g].Layout.ChannelCount).Select(_ => new List<float>())]);
        }

        foreach (var item in read(reader))
        {
            var chunk = item.Chunk;
            ref var entry = ref result[item.GroupIndex];
            if (entry.First < 0)
            {
                entry.First = chunk.FirstSampleIndex;
            }

            // Range chunks reuse their buffer: copy before asking for the next.
            for (var c = 0; c < chunk.Layout.ChannelCount; c++)
            {
                entry.Samples[c].AddRange(chunk.SamplesUv.Slice(c * chunk.SamplesPerChannel, chunk.SamplesPerChannel).ToArray());
            }
        }

        return result;
    }
}
