using System.Net;
using System.Text.Json;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.EndToEnd;
using HumWatch.Host.Tests.Web.Support;
using Xunit;
using Some = HumWatch.Host.Tests.Publishing.Support.Some;

namespace HumWatch.Host.Tests.Web;

/// <summary>The rooms of every instance sharing the store, in one API: the real service as lab-a, a peer lab-b written into its store.</summary>
[Collection(LivePageCollection.Name)]
public sealed class FleetViewTests
{
    [Fact]
    public async Task Rooms_and_instances_show_the_whole_fleet_with_the_instance_beside_each_room()
    {
        using var folder = new TempFolder();

        // lab-b, another process on the same store file: alive, watching room-b, with a mains alert open there.
        var now = DateTimeOffset.UtcNow;
        using (var peer = new HumWatchStore(new StoreOptions { Path = Path.Combine(folder.Path, "humwatch.db") }, TimeProvider.System, "lab-b"))
        {
            Assert.Equal(InstanceStart.Fresh, peer.Instances.Register("lab-b", "peer-build", now));
            peer.StreamOwners.Record("lab-b", [new StreamSighting("room-b", now.ToUnixTimeSeconds() / 3600 * 3600, now)]);
            peer.Alerts.AppendAlert(Some.Raised("room-b", now.AddSeconds(-5)));
        }

        await using var page = await LivePage.StartAsync(folder.Path, new Dictionary<string, string?>
        {
            ["Instance:Name"] = "lab-a",
            ["Instance:HeartbeatSeconds"] = "1",
            ["Instance:StaleAfterSeconds"] = "120", // lab-b beats no more in this test; it must not be swept meanwhile
            ["Web:SilentAfterSeconds"] = "120",
        });
        using var pusher = new RoomPusher(page.Service.IngestEndpoint);
        pusher.Push("room-a", Rooms.Quiet("room-a"), seconds: 20);

        var rooms = await page.WaitForJsonAsync(
            "/api/v1/rooms",
            r => LivePage.Room(r, "room-a")?.GetProperty("state").GetString() == "clean" && LivePage.Room(r, "room-b") is not null,
            "room-a clean here and room-b from the store");
        var local = LivePage.Room(rooms, "room-a")!.Value;
        Assert.Equal("lab-a", local.GetProperty("instance").GetString());

        var remote = LivePage.Room(rooms, "room-b")!.Value;
        Assert.Equal("lab-b", remote.GetProperty("instance").GetString());
        Assert.Equal("affected", remote.GetProperty("state").GetString());
        Assert.Equal("marked", remote.GetProperty("severity").GetString());
        var alert = Assert.Single(remote.GetProperty("alerts").EnumerateArray());
        Assert.Equal("mains/h1", alert.GetProperty("key").GetString());
        Assert.Equal("mains h1", alert.GetProperty("label").GetString());
        Assert.Equal(JsonValueKind.Null, remote.GetProperty("status").ValueKind);

        Assert.Equal("lab-b", (await page.GetJsonAsync("/api/v1/rooms/room-b")).GetProperty("instance").GetString());
        using var spectrum = await page.Http.GetAsync("/api/v1/rooms/room-b/spectrum");
        Assert.Equal(HttpStatusCode.NotFound, spectrum.StatusCode);
        Assert.Contains("watched by instance lab-b", await spectrum.Content.ReadAsStringAsync(), StringComparison.Ordinal);

        // Both instances, each with the rooms it watched last; lab-a's rooms appear once its beat has written them.
        var instances = await page.WaitForJsonAsync(
            "/api/v1/instances",
            i => i.GetProperty("instances").EnumerateArray().Any(x => x.GetProperty("name").GetString() == "lab-a" && x.GetProperty("rooms").GetArrayLength() == 1),
            "lab-a owning room-a");
        Assert.Equal("lab-a", instances.GetProperty("instance").GetString());
        var list = instances.GetProperty("instances").EnumerateArray().ToList();
        Assert.Equal(["lab-a", "lab-b"], list.Select(x => x.GetProperty("name").GetString()));
        Assert.All(list, x => Assert.Equal("running", x.GetProperty("state").GetString()));
        Assert.Equal(["room-a"], list[0].GetProperty("rooms").EnumerateArray().Select(r => r.GetString()));
        Assert.Equal(["room-b"], list[1].GetProperty("rooms").EnumerateArray().Select(r => r.GetString()));
        Assert.Equal("peer-build", list[1].GetProperty("buildVersion").GetString());
        Assert.Equal(JsonValueKind.Null, list[1].GetProperty("stoppedUtc").ValueKind);
    }
}
