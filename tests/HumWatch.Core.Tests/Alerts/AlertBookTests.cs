using HumWatch.Core.Alerts;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Tests.Alerts.Support;
using Xunit;

namespace HumWatch.Core.Tests.Alerts;

public sealed class AlertBookTests
{
    private static readonly DateTimeOffset Start = new(2026, 3, 2, 9, 0, 0, TimeSpan.Zero);

    private readonly FrameBuilder _builder = new();
    private readonly CollectingAlertSink _sink = new();

    private static LineSpec Mains(double amplitudeUvRms, double share = 1.0) =>
        new(FrameBuilder.Mains(), 50.02, amplitudeUvRms, share, 1, 0, 2);

    private (AlertBook Book, FrameClock Clock) NewBook(AlertOptions? options = null) =>
        (new AlertBook("room-a", options ?? new AlertOptions()), new FrameClock(_builder, Start));

    private void Feed(AlertBook book, FrameClock clock, int frames, params LineSpec[] lines)
    {
        for (var i = 0; i < frames; i++)
        {
            book.Observe(clock.Next(lines), clock.EndUtc, _sink);
        }
    }

    // Raise/clear counts with separate thresholds (hysteresis): common practice, no source.
    [Fact]
    public void Alert_is_raised_exactly_on_the_RaiseAfterFrames_th_consecutive_frame()
    {
        var (book, clock) = NewBook();
        Feed(book, clock, 2, Mains(2));
        Assert.Empty(_sink.Events);

        Feed(book, clock, 1, Mains(2));

        var raised = Assert.IsType<AlertRaised>(Assert.Single(_sink.Events));
        Assert.Equal("mains/h1", raised.Key.ToString());
        Assert.Equal("room-a", raised.StreamId);
        Assert.Equal(AlertSeverity.Minor, raised.Severity); // levels 1 and 5 µV RMS (judgement, common practice, no source): 1 µV ≤ 2 µV < 5 µV
        Assert.Equal(12, raised.StreamSeconds, 9); // third frame of 8 s span, 2 s hop ends at 12 s
        Assert.Equal(Start + TimeSpan.FromSeconds(12), raised.Utc);
        Assert.Equal(0, raised.OnsetSeconds, 9);
        Assert.Equal(Start, raised.OnsetUtc);
        Assert.Equal(["Cz", "Fp1", "O1"], raised.WorstChannels);
        Assert.Equal(50.02, raised.FrequencyHz, 9);
        Assert.Equal(2, raised.AmplitudeUvRms, 9);
        Assert.Contains("ground", raised.Suggestion, StringComparison.Ordinal);
        Assert.Single(book.Active);
    }

    [Fact]
    public void Onset_is_dated_by_the_line_evidence_when_the_analyser_gives_it()
    {
        var (book, clock) = NewBook();
        Feed(book, clock, 2);
        // Third frame spans 4–12 s; the line shows only in segments from 8 s on.
        Feed(book, clock, 1, Mains(2) with { Evidence = (8, 12) });
        Feed(book, clock, 2, Mains(2) with { Evidence = (6, 14) });

        var raised = Assert.IsType<AlertRaised>(Assert.Single(_sink.Events));
        Assert.Equal(8, raised.OnsetSeconds, 9);
        Assert.Equal(Start + TimeSpan.FromSeconds(8), raised.OnsetUtc);
    }

    [Fact]
    public void A_gap_after_RaiseAfterFrames_minus_one_frames_restarts_the_count()
    {
        var (book, clock) = NewBook();
        Feed(book, clock, 2, Mains(2));
        Feed(book, clock, 1);
        Feed(book, clock, 2, Mains(2));
        Assert.Empty(_sink.Events);

        Feed(book, clock, 1, Mains(2));
        Assert.IsType<AlertRaised>(Assert.Single(_sink.Events));
    }

    [Fact]
    public void A_line_present_but_below_minor_counts_as_absent()
    {
        var (book, clock) = NewBook();
        Feed(book, clock, 2, Mains(2));
        Feed(book, clock, 1, Mains(0.9));
        Feed(book, clock, 2, Mains(2));
        Assert.Empty(_sink.Events);
    }

    [Fact]
    public void Alert_clears_exactly_after_ClearAfterFrames_frames_without_it()
    {
        var (book, clock) = NewBook();
        Feed(book, clock, 3, Mains(2));
        Feed(book, clock, 1, Mains(7));
        Feed(book, clock, 4);
        Assert.Single(_sink.Events);

        Feed(book, clock, 1);

        var cleared = Assert.IsType<AlertCleared>(_sink.Events[^1]);
        Assert.Equal(AlertClearReason.Subsided, cleared.Reason);
        Assert.Equal("subsided", cleared.Reason.ToText());
        Assert.Equal(7, cleared.PeakAmplitudeUvRms, 9);
        Assert.Equal(14, cleared.DurationSeconds, 9); // onset 0 s to end of the 4th frame at 14 s
        Assert.Equal(AlertSeverity.Minor, cleared.PeakSeverity); // one frame at 7 µV is not held long enough to change severity
        Assert.Empty(book.Active);
    }

    [Fact]
    public void One_qualifying_frame_during_the_clear_countdown_restarts_it()
    {
        var (book, clock) = NewBook();
        Feed(book, clock, 3, Mains(2));
        Feed(book, clock, 4);
        Feed(book, clock, 1, Mains(2));
        Feed(book, clock, 4);
        Assert.Single(_sink.Events);
        Feed(book, clock, 1);
        Assert.IsType<AlertCleared>(_sink.Events[^1]);
    }

    [Fact]
    public void Severity_rises_after_the_hold_and_does_not_flap_at_a_level_edge()
    {
        var (book, clock) = NewBook();
        Feed(book, clock, 3, Mains(6));
        Assert.Equal(AlertSeverity.Marked, Assert.IsType<AlertRaised>(Assert.Single(_sink.Events)).Severity);

        // Hovering around the 5 µV edge: within the 20 % drop margin, no change.
        for (var i = 0; i < 10; i++)
        {
            Feed(book, clock, 1, Mains(i % 2 == 0 ? 4.5 : 5.5));
        }

        Assert.Single(_sink.Events);

        // Two frames severe then one not: the hold of 3 is not met.
        Feed(book, clock, 2, Mains(25));
        Feed(book, clock, 1, Mains(19));
        Assert.Single(_sink.Events);

        Feed(book, clock, 3, Mains(25));
        var up = Assert.IsType<AlertSeverityChanged>(_sink.Events[^1]);
        Assert.Equal(AlertSeverity.Marked, up.PreviousSeverity);
        Assert.Equal(AlertSeverity.Severe, up.NewSeverity);
        Assert.Equal(AlertSeverity.Severe, Assert.Single(book.Active).Severity);

        // 17 µV is below 20 µV but within the margin (17 / 0.8 = 21.25 µV): stays severe.
        Feed(book, clock, 5, Mains(17));
        Assert.Equal(2, _sink.Events.Count);

        // Clearly lower for the hold: drops to minor.
        Feed(book, clock, 3, Mains(2));
        var down = Assert.IsType<AlertSeverityChanged>(_sink.Events[^1]);
        Assert.Equal(AlertSeverity.Minor, down.NewSeverity);

        Feed(book, clock, 5);
        var cleared = Assert.IsType<AlertCleared>(_sink.Events[^1]);
        Assert.Equal(AlertSeverity.Severe, cleared.PeakSeverity);
        Assert.Equal(AlertSeverity.Minor, cleared.LastSeverity);
        Assert.Equal(25, cleared.PeakAmplitudeUvRms, 9);
    }

    [Fact]
    public void Unidentified_lines_alert_only_from_marked_and_cluster_within_two_bins()
    {
        var (book, clock) = NewBook();
        Feed(book, clock, 3, new LineSpec(SourceMatch.None, 37.0, 3, 1.0, 0));
        Assert.Empty(_sink.Events);

        Feed(book, clock, 1, new LineSpec(SourceMatch.None, 37.0, 6, 1.0, 0));
        Feed(book, clock, 1, new LineSpec(SourceMatch.None, 37.25, 6, 1.0, 0));
        Feed(book, clock, 1, new LineSpec(SourceMatch.None, 37.5, 6, 1.0, 0));

        var raised = Assert.IsType<AlertRaised>(Assert.Single(_sink.Events));
        Assert.Equal("unidentified/37.50Hz", raised.Key.ToString());
        Assert.Equal(AlertSeverity.Marked, raised.Severity);
        Assert.Contains("switched on", raised.Suggestion, StringComparison.Ordinal);

        // A line 1 Hz away (4 bins) is a different finding.
        Feed(book, clock, 3, new LineSpec(SourceMatch.None, 38.5, 6, 1.0, 0));
        Assert.Equal(2, _sink.Events.OfType<AlertRaised>().Count());
    }

    [Fact]
    public void Unidentified_lines_are_ignored_when_switched_off()
    {
        var (book, clock) = NewBook(new AlertOptions { AlertOnUnidentified = false });
        Feed(book, clock, 6, new LineSpec(SourceMatch.None, 37.0, 30, 1.0, 0));
        Assert.Empty(_sink.Events);
    }

    [Fact]
    public void Lines_below_the_minimum_channel_share_do_not_count()
    {
        var (book, clock) = NewBook(new AlertOptions { MinChannelShare = 0.5 });
        Feed(book, clock, 6, Mains(10, share: 0.25));
        Assert.Empty(_sink.Events);
        Feed(book, clock, 3, Mains(10, share: 0.5));
        Assert.Single(_sink.Events);
    }

    [Fact]
    public void Aliased_harmonics_are_their_own_alert_and_keep_the_flag()
    {
        var (book, clock) = NewBook();
        var aliased = new LineSpec(FrameBuilder.Mains(harmonic: 4, aliased: true), 50.0, 3, 0.5, 2);
        Feed(book, clock, 3, Mains(2), aliased);

        var raised = _sink.Events.OfType<AlertRaised>().ToList();
        Assert.Equal(2, raised.Count);
        var h4 = Assert.Single(raised, r => r.Key.ToString() == "mains/h4");
        Assert.True(h4.Source.Aliased);
        Assert.Equal(4, h4.Source.Harmonic);
    }

    [Fact]
    public void Channel_fault_raises_and_clears_with_its_own_key()
    {
        var (book, clock) = NewBook();
        ChannelFault[] flat = [new(1, ChannelFaultKind.Flat, 1)];
        for (var i = 0; i < 3; i++)
        {
            book.Observe(clock.Next(faults: flat), clock.EndUtc, _sink);
        }

        var raised = Assert.IsType<AlertRaised>(Assert.Single(_sink.Events));
        Assert.Equal("fault/Cz/flat", raised.Key.ToString());
        Assert.Equal(AlertCategory.ChannelFault, raised.Category);
        Assert.Equal(ChannelFaultKind.Flat, raised.FaultKind);
        Assert.Equal(AlertSeverity.Marked, raised.Severity);
        Assert.Equal(["Cz"], raised.WorstChannels);
        Assert.Contains("Cz", raised.Suggestion, StringComparison.Ordinal);

        Feed(book, clock, 5);
        var cleared = Assert.IsType<AlertCleared>(_sink.Events[^1]);
        Assert.Equal("fault/Cz/flat", cleared.Key.ToString());
        Assert.True(double.IsNaN(cleared.PeakAmplitudeUvRms));
    }

    [Fact]
    public void Channel_faults_do_not_alert_when_switched_off()
    {
        var (book, clock) = NewBook(new AlertOptions { ChannelFaultAlerts = false });
        ChannelFault[] clipped = [new(0, ChannelFaultKind.Clipped, 0.2)];
        for (var i = 0; i < 6; i++)
        {
            book.Observe(clock.Next(faults: clipped), clock.EndUtc, _sink);
        }

        Assert.Empty(_sink.Events);
    }

    [Fact]
    public void Flush_clears_active_alerts_as_stream_ended_and_drops_pending_ones()
    {
        var (book, clock) = NewBook();
        Feed(book, clock, 3, Mains(2));
        Feed(book, clock, 2, Mains(2), new LineSpec(FrameBuilder.Display(75), 75.03, 4, 0.25, 3));
        var endUtc = clock.EndUtc;

        book.Flush(clock.EndSeconds, endUtc, _sink);

        Assert.Equal(2, _sink.Events.Count);
        var cleared = Assert.IsType<AlertCleared>(_sink.Events[^1]);
        Assert.Equal("mains/h1", cleared.Key.ToString());
        Assert.Equal(AlertClearReason.StreamEnded, cleared.Reason);
        Assert.Equal("stream ended", cleared.Reason.ToText());
        Assert.Equal(endUtc, cleared.Utc);
        Assert.Empty(book.Active);

        // Nothing carries over: a new run needs the full count again.
        Feed(book, clock, 2, Mains(2));
        Assert.Equal(2, _sink.Events.Count);
    }

    [Fact]
    public void Steady_state_without_events_allocates_nothing()
    {
        var (book, clock) = NewBook();
        Feed(book, clock, 10, Mains(2));
        var lines = new[] { Mains(2) };
        var frame = clock.Next(lines);
        var utc = clock.EndUtc;
        book.Observe(frame, utc, _sink);
        var count = _sink.Events.Count;

        var before = GC.GetAllocatedBytesForCurrentThread();
        for (var i = 0; i < 200; i++)
        {
            book.Observe(frame, utc, _sink);
        }

        var allocated = GC.GetAllocatedBytesForCurrentThread() - before;
        Assert.Equal(count, _sink.Events.Count);
        Assert.Equal(0, allocated);
    }

    [Fact]
    public void Options_validation_names_each_bad_key()
    {
        var options = new AlertOptions { RaiseAfterFrames = 0, MarkedUvRms = 0.5, MinChannelShare = 2, UnidentifiedMinSeverity = AlertSeverity.None };
        Assert.Contains(options.Validate(), e => e.StartsWith("RaiseAfterFrames", StringComparison.Ordinal));
        var errors = options.Validate("Alerts");
        Assert.Contains(errors, e => e.StartsWith("Alerts:RaiseAfterFrames", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Alerts:MarkedUvRms", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Alerts:MinChannelShare", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Alerts:UnidentifiedMinSeverity", StringComparison.Ordinal));
        Assert.Empty(new AlertOptions().Validate());

        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new AlertBook("s", options));
        Assert.Equal("options", ex.ParamName);
    }

    [Fact]
    public void Default_levels_follow_the_reference_anchors()
    {
        var options = new AlertOptions();
        Assert.Equal(1, options.MinorUvRms); // above an EEG amplifier's own noise (judgement, common practice, no source)
        Assert.Equal(5, options.MarkedUvRms); // rivals background EEG (judgement, common practice, no source)
        Assert.Equal(AlertSeverity.None, options.SeverityOf(0.99));
        Assert.Equal(AlertSeverity.Minor, options.SeverityOf(1));
        Assert.Equal(AlertSeverity.Marked, options.SeverityOf(5));
        Assert.Equal(AlertSeverity.Severe, options.SeverityOf(20));
    }

    [Theory]
    [InlineData(3, 5, 11)]
    [InlineData(1, 1, 12)]
    [InlineData(4, 2, 13)]
    public void Raise_and_clear_frames_match_a_plain_counter_model_on_random_presence(int raiseAfter, int clearAfter, int seed)
    {
        var (book, clock) = NewBook(new AlertOptions { RaiseAfterFrames = raiseAfter, ClearAfterFrames = clearAfter });
        var random = new Random(seed);
        var expected = new List<string>();
        var actual = new List<string>();
        bool raised = false;
        int above = 0, below = 0;
        for (var frame = 0; frame < 2000; frame++)
        {
            var present = random.NextDouble() < 0.6;
            // Reference model: consecutive-frame counters, written independently of AlertBook.
            if (present)
            {
                above++;
                below = 0;
                if (!raised && above == raiseAfter)
                {
                    raised = true;
                    expected.Add($"raised@{frame}");
                }
            }
            else
            {
                above = 0;
                below++;
                if (raised && below == clearAfter)
                {
                    raised = false;
                    expected.Add($"cleared@{frame}");
                }
            }

            var count = _sink.Events.Count;
            Feed(book, clock, 1, present ? [Mains(2)] : []);
            for (var i = count; i < _sink.Events.Count; i++)
            {
                actual.Add($"{_sink.Events[i].EventKind.ToText()}@{frame}");
            }
        }

        Assert.True(expected.Count > 10, "The random sequence should raise and clear several times.");
        Assert.Equal(expected, actual);
    }
}
