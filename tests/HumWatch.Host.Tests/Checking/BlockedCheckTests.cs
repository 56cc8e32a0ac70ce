using System.Text.Json;
using HumWatch.Core.Analysis;
using HumWatch.Core.Reporting;
using HumWatch.Formats;
using HumWatch.Host.Checking;
using HumWatch.Host.Tests.Ingest.Support;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Host.Tests.Checking;

/// <summary>
/// `check` on several threads splits a gap-free EDF in time; the report must be the one a single pass from the first
/// record gives, byte for byte, whatever the block boundaries cut through (a line's onset, a fault, a second rate group).
/// </summary>
public sealed class BlockedCheckTests : IDisposable
{
    private readonly TempFolder _temp = new();

    [Theory]
    [InlineData(2)]
    [InlineData(3)]
    public void Splitting_a_recording_in_time_gives_the_same_report_as_one_pass(int threads)
    {
        var room = new SimulatedRoom
        {
            Name = "split-room",
            SampleRateHz = 250,
            Channels = SimulatedRoom.Montage(8),
            Tones =
            [
                new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = 5, WanderHz = 0.02, OnsetSeconds = 70 },
                new SimulatedTone { Name = "display", FrequencyHz = 75, AmplitudeUvRms = 4, Channels = ["Fp1", "Fp2"], OnsetSeconds = 131 },
            ],
            Faults = [new SimulatedFault { Kind = SimulatedFaultKind.Flat, Channel = "F8", OnsetSeconds = 200, LevelUv = 0 }],
        };
        var path = WriteSingleRate("split.edf", room, seconds: 300);
        AssertSplits(path, threads, minimumBlocks: 3);

        var oneFile = Report(path, threads: 1);
        var split = Report(path, threads);

        Assert.Equal(oneFile, split);
        using var json = System.Text.Json.JsonDocument.Parse(oneFile);
        var frequencies = json.RootElement.GetProperty("lines").EnumerateArray().Select(l => l.GetProperty("frequencyHz").GetDouble()).ToList();
        Assert.Contains(frequencies, f => Math.Abs(f - 50) <= 0.03); // simulated mains wanders ±0.02 Hz
        Assert.Contains(frequencies, f => Math.Abs(f - 75) <= 0.01);
        Assert.Contains("\"kind\": \"flat\"", oneFile, StringComparison.Ordinal);
    }

    [Fact]
    public void A_file_shorter_than_a_block_per_core_is_split_one_block_per_core_and_reports_like_one_pass()
    {
        // 31 s on 2 threads (the 4 MB file of the bench's dataset section): two blocks of 16 s and 15 s, the second
        // re-reading 6 s (span − hop) of warm-up; the mains line starts inside the first block and runs across the cut.
        var room = new SimulatedRoom
        {
            Name = "short-room",
            SampleRateHz = 250,
            Channels = SimulatedRoom.Montage(8),
            Tones = [new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = 5, WanderHz = 0.02, OnsetSeconds = 4 }],
        };
        var path = WriteSingleRate("short.edf", room, seconds: 31);
        var plan = AssertSplits(path, threads: 2, minimumBlocks: 2);
        Assert.Equal(16, plan.BlockRecords);

        var oneFile = Report(path, threads: 1);
        Assert.Equal(oneFile, Report(path, threads: 2));
        using var json = JsonDocument.Parse(oneFile);
        Assert.Contains(json.RootElement.GetProperty("lines").EnumerateArray(), l => Math.Abs(l.GetProperty("frequencyHz").GetDouble() - 50) <= 0.03); // simulated mains wanders ±0.02 Hz
    }

    [Fact]
    public void Saturation_judged_against_the_span_and_the_other_channels_splits_like_one_pass()
    {
        // The saturation tests compare a still stretch with the rest of its own span and with the other channels of the
        // same span, never with earlier spans, so block boundaries must not matter. Blocks start every 64 s (300 s on 2
        // threads): F3 drifts onto a 2500 µV rail (inside EDF16's ±3276.7 µV) from 50 s — riding it near 62 s, pinned
        // from about 63 s, across the 64 s boundary; C3 is hard-clipped at ±150 µV over 120–180 s (across 128 s);
        // Cz comes off at 185 s, flat at 20 µV (across 192 s).
        var room = new SimulatedRoom
        {
            Name = "rail-room",
            SampleRateHz = 250,
            Channels = SimulatedRoom.Montage(10),
            Faults =
            [
                new SimulatedFault { Kind = SimulatedFaultKind.OffsetDrift, Channel = "F3", OnsetSeconds = 50, DriftUvPerSecond = 200, LevelUv = 2500 },
                new SimulatedFault { Kind = SimulatedFaultKind.Clipped, Channel = "C3", OnsetSeconds = 120, OffsetSeconds = 180, Gain = 6, LevelUv = 150 },
                new SimulatedFault { Kind = SimulatedFaultKind.Flat, Channel = "Cz", OnsetSeconds = 185, LevelUv = 20, NoiseUvRms = 0.03 },
            ],
        };
        var path = WriteSingleRate("rail.edf", room, seconds: 300);
        var plan = AssertSplits(path, threads: 2, minimumBlocks: 3);
        Assert.Equal(64, plan.BlockRecords);

        var oneFile = Report(path, threads: 1);
        Assert.Equal(oneFile, Report(path, threads: 2));

        using var json = JsonDocument.Parse(oneFile);
        var kinds = json.RootElement.GetProperty("channelFaults").EnumerateArray()
            .Select(f => $"{f.GetProperty("channel").GetString()} {f.GetProperty("kind").GetString()}")
            .Order(StringComparer.Ordinal)
            .ToArray();
        Assert.Equal(["C3 clipped", "Cz flat", "F3 clipped"], kinds);
    }

    [Fact]
    public void Two_rate_groups_with_three_second_records_split_on_a_common_grid_and_match_one_pass()
    {
        // 3 s records against a 2 s hop: blocks may only start every 2 records (6 s), where both grids meet.
        var low = new RoomSimulator(new SimulatedRoom { Name = "low", SampleRateHz = 256, Channels = SimulatedRoom.Montage(4), Tones = [new SimulatedTone { Name = "mains", FrequencyHz = 60, AmplitudeUvRms = 5, OnsetSeconds = 50 }] }, seed: 11);
        var high = new RoomSimulator(new SimulatedRoom { Name = "high", SampleRateHz = 512, Channels = [.. SimulatedRoom.Montage(8).Skip(4)], Tones = [new SimulatedTone { Name = "display", FrequencyHz = 144, AmplitudeUvRms = 4, OnsetSeconds = 95 }] }, seed: 12);
        var path = Path.Combine(_temp.Path, "two-rates.edf");
        var signals = low.Layout.Channels.Select(c => EdfWriterSignal.Edf16(c.Label, 768))
            .Concat(high.Layout.Channels.Select(c => EdfWriterSignal.Edf16(c.Label, 1536)))
            .ToArray();
        using (var writer = new EdfWriter(path, new EdfWriterOptions { Signals = signals, RecordDurationSeconds = 3 }))
        {
            var record = new float[(4 * 768) + (4 * 1536)];
            for (var r = 0; r < 80; r++)
            {
                low.Fill(record.AsSpan(0, 4 * 768), 768);
                high.Fill(record.AsSpan(4 * 768), 1536);
                writer.WriteRecord(record);
            }
        }

        var plan = AssertSplits(path, threads: 2, minimumBlocks: 3);
        Assert.Equal(0, plan.BlockRecords % 2);
        Assert.Equal(Report(path, threads: 1), Report(path, threads: 2));
    }

    [Fact]
    public void A_malformed_record_is_reported_as_the_first_one_a_single_pass_meets()
    {
        var room = new SimulatedRoom { Name = "bad-room", SampleRateHz = 250, Channels = SimulatedRoom.Montage(8) };
        var path = WriteSingleRate("bad.edf", room, seconds: 300);
        AssertSplits(path, threads: 2, minimumBlocks: 3);

        // Spoil the time-keeping annotation of records 101 and 251 (1-based): the split run meets 251 in a later block,
        // possibly first, and must still report 101.
        const int headerBytes = 256 * (8 + 1 + 1);
        const int recordBytes = (8 * 250 * 2) + 120;
        using (var file = new FileStream(path, FileMode.Open, FileAccess.Write))
        {
            foreach (var record in new[] { 100, 250 })
            {
                file.Position = headerBytes + ((long)record * recordBytes) + (8 * 250 * 2);
                file.Write("zz\u0014\u0014\0"u8);
            }
        }

        var oneFile = Report(path, threads: 1);
        Assert.Contains("\"verdict\": \"error\"", oneFile, StringComparison.Ordinal);
        Assert.Contains("data record 101", oneFile, StringComparison.Ordinal);
        Assert.Equal(oneFile, Report(path, threads: 2));
    }

    [Fact]
    public void A_discontinuous_recording_is_read_in_one_pass()
    {
        var room = new SimulatedRoom { Name = "gap-room", SampleRateHz = 250, Channels = SimulatedRoom.Montage(4) };
        var path = WriteSingleRate("gaps.edf", room, seconds: 200);

        // EDF+ spec §2.1.3: the 44-character reserved field at byte 192 says "EDF+D" for a file that may have gaps.
        using (var file = new FileStream(path, FileMode.Open, FileAccess.Write))
        {
            file.Position = 192;
            file.Write("EDF+D"u8);
        }

        using (var reader = RecordingReader.Open(path))
        {
            Assert.Equal("EDF+D", reader.Info.Format);
            Assert.Null(BlockedAnalysis.TryPlan(path, reader, new AnalysisOptions(), workers: 2));
        }

        Assert.Equal(Report(path, threads: 1), Report(path, threads: 2));
    }

    [Fact]
    public void Cancelling_a_split_check_stops_its_workers_and_says_it_was_cancelled()
    {
        var room = new SimulatedRoom { Name = "stopped-room", SampleRateHz = 250, Channels = SimulatedRoom.Montage(8) };
        var path = WriteSingleRate("stopped.edf", room, seconds: 300);
        var plan = AssertSplits(path, threads: 2, minimumBlocks: 3);
        using var stop = new CancellationTokenSource();
        var handedOn = 0;
        var progress = new CallbackProgress(_ =>
        {
            handedOn++;
            stop.Cancel();
        });

        Assert.ThrowsAny<OperationCanceledException>(() => new RecordingChecker(new AnalysisOptions(), new CheckLimits(), threads: 2).Check(path, progress, stop.Token));
        Assert.InRange(handedOn, 1, plan.BlockCount - 1);
    }

    public void Dispose() => _temp.Dispose();

    /// <summary>Calls back on the reporting thread (Progress&lt;T&gt; would post to the thread pool).</summary>
    private sealed class CallbackProgress(Action<double> report) : IProgress<double>
    {
        public void Report(double value) => report(value);
    }

    private static BlockedAnalysis AssertSplits(string path, int threads, int minimumBlocks)
    {
        using var reader = RecordingReader.Open(path);
        var plan = BlockedAnalysis.TryPlan(path, reader, new AnalysisOptions(), threads);
        Assert.NotNull(plan);
        Assert.True(plan.BlockCount >= minimumBlocks, $"expected at least {minimumBlocks} blocks, got {plan.BlockCount}");
        return plan;
    }

    private static string Report(string path, int threads)
    {
        var report = new RecordingChecker(new AnalysisOptions(), new CheckLimits(), threads).Check(path);
        return JsonSerializer.Serialize(report, CheckReportJsonContext.Default.CheckReport);
    }

    private string WriteSingleRate(string name, SimulatedRoom room, int seconds)
    {
        var path = Path.Combine(_temp.Path, name);
        var simulator = new RoomSimulator(room, seed: 3);
        var rate = (int)room.SampleRateHz;
        var options = new EdfWriterOptions { Signals = [.. simulator.Layout.Channels.Select(c => EdfWriterSignal.Edf16(c.Label, rate))] };
        using var writer = new EdfWriter(path, options);
        for (var second = 0; second < seconds; second++)
        {
            writer.WriteRecord(simulator.Next(rate).SamplesUv.Slice(0, rate * room.Channels.Count));
        }

        return path;
    }
}
