using HumWatch.Host.Monitoring;
using HumWatch.Host.Tests.EndToEnd;
using Xunit;

namespace HumWatch.Host.Tests.Monitoring;

public sealed class StreamMonitorGapLogTests
{
    [Fact]
    public async Task A_stream_with_a_gap_in_every_chunk_logs_the_first_gap_and_then_one_line_per_ten_seconds()
    {
        using var harness = new SessionHarness();
        var logger = new RecordingLogger<StreamMonitor>();
        await using var monitor = new StreamMonitor("room-g", harness.Factory, logger);

        // Every second chunk is left out (as a rate limit or a lossy link would): each chunk sent opens a gap.
        var chunks = SessionHarness.Chunks(Rooms.WithMains("room-g", onSeconds: 0, offSeconds: null), seconds: 40).Where((_, i) => i % 2 == 0).ToList();
        SessionHarness.Feed(monitor, chunks.Take(20));
        Assert.Single(logger.Entries, e => e.EventId.Id == 3204);

        // Ten seconds later (the harness's clock), the next gap is logged with the count of all gaps so far.
        harness.Time.Advance(TimeSpan.FromSeconds(10));
        SessionHarness.Feed(monitor, chunks.Skip(20).Take(5));
        var lines = logger.Entries.Where(e => e.EventId.Id == 3204).ToList();
        Assert.Equal(2, lines.Count);
        Assert.Contains("(1 so far)", lines[0].Message, StringComparison.Ordinal);
        var counted = int.Parse(System.Text.RegularExpressions.Regex.Match(lines[1].Message, @"\((\d+) so far\)").Groups[1].Value, System.Globalization.CultureInfo.InvariantCulture);
        Assert.True(counted >= 10, lines[1].Message); // many gaps counted, though only two lines were written
    }
}
