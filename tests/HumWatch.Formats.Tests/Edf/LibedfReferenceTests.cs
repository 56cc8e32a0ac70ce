using System.Globalization;
using HumWatch.Formats.Tests.Support;

namespace HumWatch.Formats.Tests.Edf;

/// <summary>Our reader against libedf 1.23's own readback of the same files (tests/fixtures/edf, made by make_fixtures.c).</summary>
public sealed class LibedfReferenceTests
{
    [Theory]
    [InlineData("edfplus_two_rates.edf")]
    [InlineData("edf_half_second_records.edf")]
    [InlineData("bdfplus_two_rates.bdf")]
    [InlineData("bdf_volts.bdf")]
    public void Samples_in_uV_match_libedf_physical_readback_within_float32_rounding(string file)
    {
        var dump = LibedfDump.Load(Fixtures.Edf(file + ".libedf.txt")); // libedf 1.23 edfread_physical_samples
        using var reader = RecordingReader.Open(Fixtures.Edf(file));
        var samples = ReadAll(reader);

        var compared = 0;
        foreach (var group in reader.Info.Groups)
        {
            foreach (var channel in group.Layout.Channels)
            {
                var reference = dump.Signals.Single(s => s.Label == channel.Label);
                Assert.True(VoltageUnits.TryGetFactorToUv(reference.Dimension, out var factor), reference.Dimension);
                var ours = samples[channel.Label];
                Assert.Equal(reference.Values.Length, ours.Count);
                var rangeUv = Math.Abs(reference.PhysicalMax - reference.PhysicalMin) * factor;
                for (var i = 0; i < ours.Count; i++)
                {
                    var expected = reference.Values[i] * factor;

                    // float32 keeps 24 bits (2^-24 ≈ 6e-8 relative); the dump prints 9 significant digits.
                    var tolerance = (2e-7 * Math.Abs(expected)) + (1e-12 * rangeUv);
                    Assert.True(Math.Abs(ours[i] - expected) <= tolerance, $"{file} {channel.Label} sample {i}: ours {ours[i]:R} µV, libedf {expected:R} µV");
                }

                compared++;
            }
        }

        Assert.True(compared > 0);
    }

    [Theory]
    [InlineData("edfplus_two_rates.edf")]
    [InlineData("bdfplus_two_rates.bdf")]
    public void Annotations_match_libedf_exactly(string file)
    {
        var dump = LibedfDump.Load(Fixtures.Edf(file + ".libedf.txt")); // libedf 1.23 edf_get_annotation
        using var reader = RecordingReader.Open(Fixtures.Edf(file));
        ReadAll(reader);

        Assert.Equal(dump.Annotations.Count, reader.Annotations.Count);
        for (var i = 0; i < dump.Annotations.Count; i++)
        {
            var expected = dump.Annotations[i];
            var actual = reader.Annotations[i];
            Assert.Equal(expected.Text, actual.Text);
            Assert.Equal(expected.Onset100Ns / 1e7, actual.OnsetSeconds, 9);
            if (expected.Duration is null)
            {
                Assert.Null(actual.DurationSeconds);
            }
            else
            {
                Assert.Equal(double.Parse(expected.Duration, CultureInfo.InvariantCulture), actual.DurationSeconds!.Value, 9);
            }
        }
    }

    [Fact]
    public void Edf_plus_header_matches_libedf_and_groups_by_rate_skipping_slow_and_non_voltage_signals()
    {
        var path = Fixtures.Edf("edfplus_two_rates.edf");
        var dump = LibedfDump.Load(path + ".libedf.txt"); // libedf 1.23 edf_hdr_struct
        using var reader = RecordingReader.Open(path);
        var info = reader.Info;

        Assert.Equal("EDF+C", info.Format);
        Assert.Equal(dump.Start, info.StartLocal);
        Assert.Equal(dump.DataRecords * dump.RecordDuration100Ns / 1e7, info.DurationSeconds, 9);
        Assert.Equal(2, info.Groups.Count);
        Assert.Equal(256.0, info.Groups[0].Layout.SampleRateHz);
        Assert.Equal(["Fp1", "Cz"], info.Groups[0].Layout.Channels.Select(c => c.Label));
        Assert.Equal([0, 1], info.Groups[0].SignalIndices);
        Assert.Equal(128.0, info.Groups[1].Layout.SampleRateHz);
        Assert.Equal("O1", info.Groups[1].Layout.Channels.Single().Label);

        // O1 is in mV with physical range ±5 mV → ±5000 µV.
        Assert.Equal(-5000.0, info.Groups[1].Layout.Channels[0].RangeMinUv!.Value, 9);
        Assert.Equal(5000.0, info.Groups[1].Layout.Channels[0].RangeMaxUv!.Value, 9);

        Assert.Equal([3, 4, 5], info.Skipped.Select(s => s.SignalIndex));
        Assert.Contains("below the analysis minimum", info.Skipped[0].Reason, StringComparison.Ordinal);
        Assert.Contains("'bpm' is not a voltage", info.Skipped[1].Reason, StringComparison.Ordinal);
        Assert.Equal("EDF Annotations", info.Skipped[2].Label);
        Assert.Equal("HP:0.1Hz LP:75Hz N:50Hz; HP:0.1Hz LP:75Hz", info.Prefiltering);
    }

    [Fact]
    public void Bdf_plus_skips_the_status_channel_and_reports_its_format()
    {
        using var reader = RecordingReader.Open(Fixtures.Edf("bdfplus_two_rates.bdf"));
        Assert.Equal("BDF+C", reader.Info.Format);
        Assert.Equal([512.0, 256.0], reader.Info.Groups.Select(g => g.Layout.SampleRateHz));
        Assert.Contains(reader.Info.Skipped, s => s.Label == "Status" && s.Reason.Contains("trigger", StringComparison.Ordinal));
        Assert.Contains(reader.Info.Skipped, s => s.Label == "BDF Annotations");
    }

    [Fact]
    public void Plain_edf_with_negative_gain_reports_range_in_order_and_half_second_records_chunk_as_asked()
    {
        using var reader = RecordingReader.Open(Fixtures.Edf("edf_half_second_records.edf"));
        Assert.Equal("EDF", reader.Info.Format);
        var f3 = reader.Info.Groups[0].Layout;
        Assert.Equal(256.0, f3.SampleRateHz);
        Assert.Equal(-2000.0, f3.Channels[0].RangeMinUv);
        Assert.Equal(2000.0, f3.Channels[0].RangeMaxUv);
        Assert.Equal(200.0, reader.Info.Groups[1].Layout.SampleRateHz);

        // 1 s chunks of 0.5 s records: 2 records per chunk; 4 records → 2 chunks per group, contiguous.
        var chunks = reader.ReadChunks(1.0).ToList();
        var group0 = chunks.Where(c => c.GroupIndex == 0).Select(c => c.Chunk).ToList();
        Assert.Equal([0L, 256L], group0.Select(c => c.FirstSampleIndex));
        Assert.All(group0, c => Assert.Equal(256, c.SamplesPerChannel));
        var group1 = chunks.Where(c => c.GroupIndex == 1).Select(c => c.Chunk).ToList();
        Assert.Equal([0L, 200L], group1.Select(c => c.FirstSampleIndex));
    }

    internal static Dictionary<string, List<float>> ReadAll(IRecordingReader reader)
    {
        var result = new Dictionary<string, List<float>>();
        var nextIndex = new long[reader.Info.Groups.Count];
        foreach (var (groupIndex, chunk) in reader.ReadChunks())
        {
            Assert.Equal(nextIndex[groupIndex], chunk.FirstSampleIndex);
            nextIndex[groupIndex] = chunk.EndSampleIndex;
            for (var c = 0; c < chunk.Layout.ChannelCount; c++)
            {
                var label = chunk.Layout.Channels[c].Label;
                if (!result.TryGetValue(label, out var list))
                {
                    result[label] = list = [];
                }

                list.AddRange(chunk.Channel(c).ToArray());
            }
        }

        return result;
    }
}
