using System.Text.Json;
using HumWatch.Core.Summaries;
using HumWatch.Host.Store;
using Xunit;

namespace HumWatch.Host.Tests.Summaries;

/// <summary>The day sheets name the instances that watched each room, from the store's stream owners alone.</summary>
public sealed class SummaryInstancesTests
{
    private static readonly DateOnly Day = new(2026, 10, 24);

    [Fact]
    public void Each_room_names_the_instances_that_watched_its_day_and_a_later_render_gives_the_same_bytes()
    {
        using var harness = new SummaryHarness("Europe/Berlin", new DateTimeOffset(2026, 10, 25, 6, 0, 0, TimeSpan.Zero));
        var (from, to) = LocalDay.RangeUtc(Day, harness.Zone);
        harness.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-a", "live-1", from, to, seed: 3));
        harness.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-b", "live-2", from, to, seed: 4));

        // room-a: lab-b in the morning, lab-a from noon (the room moved); lab-c the hour before the day began.
        // room-b: its data came from a build before instance names, so no owner is recorded.
        var owners = harness.Store.StreamOwners;
        owners.Record("lab-b", [Seen("room-a", from.AddHours(2))]);
        owners.Record("lab-a", [Seen("room-a", from.AddHours(12)), Seen("room-a", from.AddHours(23))]);
        owners.Record("lab-c", [Seen("room-a", from.AddHours(-1))]);

        var first = harness.Renderer().RenderDay(Day, force: true);
        var dayPage = File.ReadAllText(Path.Combine(harness.Options.Folder, "2026-10-24", "day.md"));
        Assert.Equal(["lab-a", "lab-b"], Instances(first.Single(r => r.Stream == "room-a").Json));
        Assert.Empty(Instances(first.Single(r => r.Stream == "room-b").Json));
        Assert.Contains("| room-a | lab-a, lab-b | **", dayPage, StringComparison.Ordinal);
        Assert.Contains("| room-b | – | **", dayPage, StringComparison.Ordinal);
        Assert.Contains("Watched by lab-a, lab-b. Monitored", dayPage, StringComparison.Ordinal);

        // Days later lab-c watches room-a again and lab-a goes on: the day itself reads the same.
        owners.Record("lab-c", [Seen("room-a", to.AddDays(3))]);
        owners.Record("lab-a", [Seen("room-a", to.AddHours(1))]);
        var again = harness.Renderer().RenderDay(Day, force: true);
        Assert.Equal(first.Select(r => r.Json), again.Select(r => r.Json));
        Assert.Equal(dayPage, File.ReadAllText(Path.Combine(harness.Options.Folder, "2026-10-24", "day.md")));
    }

    private static StreamSighting Seen(string stream, DateTimeOffset dataUtc) =>
        new(stream, dataUtc.ToUnixTimeSeconds() / 3600 * 3600, dataUtc.AddMinutes(1));

    private static List<string?> Instances(byte[] json)
    {
        using var document = JsonDocument.Parse(json);
        return [.. document.RootElement.GetProperty("instances").EnumerateArray().Select(e => e.GetString())];
    }
}
