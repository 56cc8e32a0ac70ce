using HumWatch.Core.Alerts;
using HumWatch.Core.Summaries;
using HumWatch.Host.Configuration;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;
using HumWatch.Host.Tests.Publishing.Support;
using HumWatch.Host.Tests.Summaries;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Options;
using Xunit;

namespace HumWatch.Host.Tests.Notify;

/// <summary>The hook notifications hang on: dispatch sinks are told of every published alert, clear and summary, after it went out.</summary>
public sealed class DispatchSinkTests
{
    [Fact]
    public void A_sink_gets_each_event_with_its_published_body_after_the_store_and_the_publisher_and_a_throwing_sink_harms_nothing()
    {
        var steps = new List<string>();
        var publisher = new RecordingPublisher(steps);
        var recording = new RecordingSink(steps);
        var logger = new RecordingLogger<AlertDispatcher>();
        var dispatcher = new AlertDispatcher(new StepStore(steps), publisher, logger, sinks: [new ThrowingSink(), recording]);

        Assert.Equal((true, true), dispatcher.Dispatch(Some.Raised()));
        Assert.Equal((true, true), dispatcher.Dispatch(Some.Cleared()));

        Assert.Equal(["store", "publish", "sink", "store", "publish", "sink"], steps);
        Assert.Equal([("alert", publisher.Published[0].Body), ("clear", publisher.Published[1].Body)], recording.Received.Select(r => (r.Kind, r.Body)));
        Assert.Equal(2, logger.Entries.Count(e => e.EventId.Id == 1470 && e.Exception is InvalidOperationException));
    }

    [Fact]
    public void A_sink_gets_each_daily_summary_with_the_published_bytes()
    {
        var (fromUtc, toUtc) = LocalDay.RangeUtc(new DateOnly(2026, 3, 1), TimeZoneInfo.Utc);
        using var h = new SummaryHarness("UTC", toUtc.AddMinutes(3));
        h.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-a", "s1", fromUtc, toUtc, seed: 11));
        var sink = new RecordingSink([]);
        var service = new DailySummaryService(
            h.Summaries, h.Publisher, Options.Create(h.Options), Options.Create(new SiteOptions { Name = "Test site", TimeZone = "UTC" }),
            NullLogger<DailySummaryService>.Instance, h.Time, sinks: [sink]);

        var written = Assert.Single(service.RenderDueDays());

        var summary = Assert.Single(sink.Summaries);
        Assert.Same(written.Summary, summary.Summary);
        Assert.Equal(Assert.Single(h.Publisher.Published).Body, summary.Body);
    }

    private sealed class StepStore(List<string> steps) : IAlertEventStore
    {
        public long AppendAlert(AlertEvent alertEvent)
        {
            steps.Add("store");
            return steps.Count;
        }
    }

    private sealed class ThrowingSink : IDispatchSink
    {
        public void OnAlertDispatched(AlertEvent alertEvent, string kind, byte[] body) => throw new InvalidOperationException("broken sink");
    }

    private sealed class RecordingSink(List<string> steps) : IDispatchSink
    {
        public List<(string Kind, byte[] Body)> Received { get; } = [];

        public List<(DaySummary Summary, byte[] Body)> Summaries { get; } = [];

        public void OnAlertDispatched(AlertEvent alertEvent, string kind, byte[] body)
        {
            steps.Add("sink");
            Received.Add((kind, body));
        }

        public void OnSummaryPublished(DaySummary summary, byte[] body) => Summaries.Add((summary, body));
    }
}
