using HumWatch.Core.Faults;
using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;
using HumWatch.Core.Tests.Alerts.Support;
using Xunit;

namespace HumWatch.Core.Tests.Ledger;

public sealed class MinuteLedgerTests
{
    private readonly FrameBuilder _builder = new();
    private readonly CollectingRows _rows = new();

    private static LineSpec Mains(double amplitudeUvRms, params int[] worst) =>
        new(FrameBuilder.Mains(), 50.0, amplitudeUvRms, 1.0, worst.Length == 0 ? [0] : worst);

    private sealed class CollectingRows : IMinuteRowSink
    {
        public List<MinuteRow> Rows { get; } = [];

        public void OnMinuteRow(MinuteRow row) => Rows.Add(row);

        public MinuteRow Single(int minute, string key) =>
            Rows.Single(r => r.MinuteUtc.Minute == minute && r.SourceKey.ToString() == key);

        public MinuteRow Single(int minute, FindingKey key) =>
            Rows.Single(r => r.MinuteUtc.Minute == minute && r.SourceKey == key);
    }

    [Fact]
    public void A_hop_across_a_minute_boundary_is_split_between_the_two_minutes()
    {
        // Stream starts at 10:00:51; first frame covers 8 s (to :59), the second adds the hop :59–01:01.
        var start = new DateTimeOffset(2026, 3, 2, 10, 0, 51, TimeSpan.Zero);
        var ledger = new MinuteLedger("room-a", "session-1");
        var clock = new FrameClock(_builder, start);

        ledger.Observe(clock.Next([Mains(2)]), clock.EndUtc, _rows);
        Assert.Empty(_rows.Rows);

        ledger.Observe(clock.Next([Mains(4)]), clock.EndUtc, _rows);
        var minute0 = _rows.Single(0, "mains/h1");
        Assert.Equal(9, minute0.MonitoredSeconds, 9);
        Assert.Equal(9, minute0.AffectedSeconds, 9);
        Assert.Equal(4, minute0.MaxAmplitudeUvRms, 9);
        Assert.Equal(3, minute0.MedianAmplitudeUvRms, 9); // median of {2, 4}
        Assert.Equal(9, _rows.Single(0, MinuteLedger.AllSourcesKey).MonitoredSeconds, 9);

        ledger.Flush(_rows);
        var minute1 = _rows.Single(1, "mains/h1");
        Assert.Equal(1, minute1.MonitoredSeconds, 9);
        Assert.Equal(1, minute1.AffectedSeconds, 9);
        Assert.Equal(4, minute1.MedianAmplitudeUvRms, 9);
        Assert.Equal(new DateTimeOffset(2026, 3, 2, 10, 1, 0, TimeSpan.Zero), minute1.MinuteUtc);
    }

    [Fact]
    public void Monitored_time_adds_up_to_the_stream_length_without_overlap()
    {
        var start = new DateTimeOffset(2026, 3, 2, 10, 0, 7, TimeSpan.Zero);
        var ledger = new MinuteLedger("room-a", "s");
        var clock = new FrameClock(_builder, start);
        for (var i = 0; i < 200; i++)
        {
            ledger.Observe(clock.Next(), clock.EndUtc, _rows);
        }

        ledger.Flush(_rows);
        var all = _rows.Rows.Where(r => r.SourceKey == MinuteLedger.AllSourcesKey).ToList();
        Assert.Equal(clock.EndSeconds, all.Sum(r => r.MonitoredSeconds), 6); // 8 s + 199 hops of 2 s = 406 s
        Assert.All(all, r => Assert.True(r.MonitoredSeconds <= 60 + 1e-9));
        Assert.Equal(7, all.Count); // 10:00:07 + 406 s = 10:06:53: minutes 00 … 06
        Assert.Equal(0, all.Sum(r => r.AffectedSeconds));
    }

    [Fact]
    public void Affected_time_counts_only_frames_at_or_above_the_level()
    {
        var start = new DateTimeOffset(2026, 3, 2, 10, 0, 0, TimeSpan.Zero);
        var ledger = new MinuteLedger("room-a", "s", minAmplitudeUvRms: 1.0);
        var clock = new FrameClock(_builder, start);
        ledger.Observe(clock.Next([Mains(3)]), clock.EndUtc, _rows); // 0–8 s
        ledger.Observe(clock.Next([Mains(0.5)]), clock.EndUtc, _rows); // 8–10 s below the level
        ledger.Observe(clock.Next([Mains(5)]), clock.EndUtc, _rows); // 10–12 s
        ledger.Observe(clock.Next(), clock.EndUtc, _rows); // 12–14 s nothing
        ledger.Flush(_rows);

        var row = _rows.Single(0, "mains/h1");
        Assert.Equal(14, row.MonitoredSeconds, 9);
        Assert.Equal(10, row.AffectedSeconds, 9);
        Assert.Equal(5, row.MaxAmplitudeUvRms, 9);
        Assert.Equal(4, row.MedianAmplitudeUvRms, 9); // median of {3, 5}
        Assert.Equal(10, _rows.Single(0, MinuteLedger.AllSourcesKey).AffectedSeconds, 9);
    }

    [Fact]
    public void A_gap_counts_the_whole_span_of_the_restarted_frame()
    {
        var ledger = new MinuteLedger("room-a", "s");
        var start = new DateTimeOffset(2026, 3, 2, 10, 0, 0, TimeSpan.Zero);
        ledger.Observe(_builder.Frame(0, 8), start.AddSeconds(8), _rows);
        ledger.Observe(_builder.Frame(2, 10), start.AddSeconds(10), _rows);
        // 20 s of samples lost; the analyser restarts the span at 30 s.
        ledger.Observe(_builder.Frame(30, 38), start.AddSeconds(38), _rows);
        ledger.Flush(_rows);

        Assert.Equal(18, _rows.Single(0, MinuteLedger.AllSourcesKey).MonitoredSeconds, 9);
    }

    [Fact]
    public void A_repeated_frame_adds_no_time()
    {
        var ledger = new MinuteLedger("room-a", "s");
        var start = new DateTimeOffset(2026, 3, 2, 10, 0, 0, TimeSpan.Zero);
        ledger.Observe(_builder.Frame(0, 8, [Mains(2)]), start.AddSeconds(8), _rows);
        ledger.Observe(_builder.Frame(0, 8, [Mains(2)]), start.AddSeconds(8), _rows);
        ledger.Flush(_rows);
        Assert.Equal(8, _rows.Single(0, "mains/h1").AffectedSeconds, 9);
    }

    [Fact]
    public void Worst_channels_mains_frequency_and_faults_are_kept_per_minute()
    {
        var ledger = new MinuteLedger("room-a", "s");
        var clock = new FrameClock(_builder, new DateTimeOffset(2026, 3, 2, 10, 0, 0, TimeSpan.Zero));
        ChannelFault[] flat = [new(3, ChannelFaultKind.Flat, 1)];
        ledger.Observe(clock.Next([Mains(2, 2, 0)], mainsHz: 49.98), clock.EndUtc, _rows);
        ledger.Observe(clock.Next([Mains(9, 1, 2)], flat, mainsHz: 50.02), clock.EndUtc, _rows);
        ledger.Observe(clock.Next([Mains(3, 0)], flat, mainsHz: 50.01), clock.EndUtc, _rows);
        ledger.Flush(_rows);

        var mains = _rows.Single(0, "mains/h1");
        Assert.Equal(["Cz", "O1", "Fp1"], mains.WorstChannels);
        Assert.Equal(50.01, mains.MainsHz, 9); // median of {49.98, 50.02, 50.01}
        var fault = _rows.Single(0, "fault/T3/flat");
        Assert.Equal(4, fault.AffectedSeconds, 9);
        Assert.True(double.IsNaN(fault.MaxAmplitudeUvRms));
        Assert.Equal(["T3"], fault.WorstChannels);
    }

    [Fact]
    public void Rows_carry_stream_session_and_a_rising_sequence()
    {
        var ledger = new MinuteLedger("room-b", "file-3f2a");
        var clock = new FrameClock(_builder, new DateTimeOffset(2026, 3, 2, 10, 0, 30, TimeSpan.Zero));
        for (var i = 0; i < 40; i++)
        {
            ledger.Observe(clock.Next([Mains(2)]), clock.EndUtc, _rows);
        }

        ledger.Flush(_rows);
        Assert.All(_rows.Rows, r => Assert.Equal("room-b", r.StreamId));
        Assert.All(_rows.Rows, r => Assert.Equal("file-3f2a", r.SessionId));
        Assert.Equal(Enumerable.Range(1, _rows.Rows.Count).Select(i => (long)i), _rows.Rows.Select(r => r.Sequence));
    }

    [Fact]
    public void Random_hops_and_gaps_are_counted_once_each_and_never_overfill_a_minute()
    {
        var random = new Random(2026);
        var start = new DateTimeOffset(2026, 3, 2, 23, 58, 13, TimeSpan.Zero);
        var ledger = new MinuteLedger("room-a", "s");
        double spanStart = 0, expectedSeconds = 0, lastEnd = 0;
        for (var i = 0; i < 500; i++)
        {
            if (i > 0 && random.NextDouble() < 0.05)
            {
                // Gap: the analyser restarts the span somewhere later.
                spanStart = lastEnd + 1 + random.Next(0, 90);
            }

            var end = spanStart + 8;
            expectedSeconds += end - Math.Max(spanStart, lastEnd);
            ledger.Observe(_builder.Frame(spanStart, end, [Mains(2)]), start.AddSeconds(end), _rows);
            lastEnd = end;
            spanStart += 2;
        }

        ledger.Flush(_rows);
        var all = _rows.Rows.Where(r => r.SourceKey == MinuteLedger.AllSourcesKey).ToList();
        Assert.Equal(expectedSeconds, all.Sum(r => r.MonitoredSeconds), 6);
        Assert.Equal(expectedSeconds, _rows.Rows.Where(r => r.SourceKey.ToString() == "mains/h1").Sum(r => r.AffectedSeconds), 6);
        Assert.All(all, r => Assert.InRange(r.MonitoredSeconds, 1e-9, 60 + 1e-9));
        Assert.Equal(all.Count, all.Select(r => r.MinuteUtc).Distinct().Count());
        Assert.Contains(all, r => r.MinuteUtc.Day == 3); // crosses UTC midnight
    }

    [Fact]
    public void Frames_inside_a_minute_allocate_nothing_once_warm()
    {
        var start = new DateTimeOffset(2026, 3, 2, 10, 0, 0, TimeSpan.Zero);
        var ledger = new MinuteLedger("room-a", "s");
        LineSpec[] lines = [Mains(2, 1, 0), new(FrameBuilder.Display(75), 75.0, 3, 0.5, 2)];
        ChannelFault[] faults = [new(3, ChannelFaultKind.Flat, 1)];
        double end = 8;
        for (; end <= 180; end += 2)
        {
            ledger.Observe(_builder.Frame(end - 8, end, lines, faults, 50.0), start.AddSeconds(end), _rows);
        }

        // Frames ending at 184 … 236 s lie inside minute 3 (the one ending at 182 s opened it).
        ledger.Observe(_builder.Frame(end - 8, end, lines, faults, 50.0), start.AddSeconds(end), _rows);
        end += 2;
        var rowsBefore = _rows.Rows.Count;
        var before = GC.GetAllocatedBytesForCurrentThread();
        for (; end <= 236; end += 2)
        {
            ledger.Observe(_builder.Frame(end - 8, end, lines, faults, 50.0), start.AddSeconds(end), _rows);
        }

        var allocated = GC.GetAllocatedBytesForCurrentThread() - before;
        Assert.Equal(rowsBefore, _rows.Rows.Count);
        Assert.Equal(0, allocated);
    }
}
