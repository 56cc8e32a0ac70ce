using HumWatch.Host.Composition;
using HumWatch.Host.Configuration;
using HumWatch.Host.Inbox;
using HumWatch.Host.Ingest;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;
using HumWatch.Host.Tests.Ingest;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Xunit;

namespace HumWatch.Host.Tests.Composition;

[Collection(IngestSocketCollection.Name)]
public sealed class HumWatchHostTests
{
    /// <summary>Only what a test must change: folders into the temp folder, sockets on ephemeral loopback ports.</summary>
    private static Dictionary<string, string?> FoldersAndPorts(string folder) => new()
    {
        ["Ingest:Endpoints:0:Address"] = "tcp://127.0.0.1:*",
        ["Publish:Endpoint"] = "tcp://127.0.0.1:*",
        ["Web:Endpoint"] = "http://127.0.0.1:0",
        ["Store:Path"] = Path.Combine(folder, "humwatch.db"),
        ["Logs:Folder"] = Path.Combine(folder, "logs"),
        ["Inbox:Folder"] = Path.Combine(folder, "inbox"),
        ["Inbox:ArchiveFolder"] = Path.Combine(folder, "archive"),
        ["Inbox:RejectedFolder"] = Path.Combine(folder, "rejected"),
        ["Summaries:Folder"] = Path.Combine(folder, "summaries"),
    };

    [Fact]
    public void With_the_embedded_defaults_the_host_builds_and_resolves_every_hosted_service_in_its_stop_order()
    {
        using var temp = new TempFolder();
        using var host = HumWatchHost.Build(new HumWatchHostSettings { Sources = SettingsSources.Isolated(FoldersAndPorts(temp.Path)) });

        var hosted = host.Services.GetServices<IHostedService>().Select(s => s.GetType()).ToList();

        // HumWatchHost's registration order is the reverse of the stop order it documents: the live page stops first (it
        // starts last, once the sockets it reports on are bound), then ingest stops taking input, then the inbox, then
        // the stream monitors drain, then the ledger writer writes the last rows, and last the store health retries
        // what still waits. At start the instance heartbeat (which closes the alerts an unclean stop left open) runs after
        // the ledger writer and before any monitor raises a new one.
        Assert.Equal(
            [typeof(StoreHealth), typeof(LogFolderGuard), typeof(LedgerWriter), typeof(HumWatch.Host.Fleet.InstanceHeartbeat), typeof(StreamMonitorService), typeof(InboxService), typeof(DailySummaryService), typeof(SocketIngestService), typeof(HumWatch.Host.Web.WebServer)],
            hosted);

        // docs/messages.md: status every Publish:StatusIntervalSeconds, default 10 s; severity minor ≥ 1 µV, marked ≥ 5 µV, severe ≥ 20 µV.
        var bound = host.Services.GetRequiredService<BoundSettings>();
        Assert.Equal(10, bound.Publish.StatusIntervalSeconds);
        Assert.Equal((1.0, 5.0, 20.0), (bound.Alerts.MinorUvRms, bound.Alerts.MarkedUvRms, bound.Alerts.SevereUvRms));
        Assert.NotNull(host.Services.GetRequiredService<IMessagePublisher>());
        Assert.True(Directory.Exists(Path.Combine(temp.Path, "logs")), "the host makes its output folders before it starts");
    }

    [Fact]
    public void A_bad_setting_stops_the_build_naming_the_key_before_any_folder_is_made()
    {
        using var temp = new TempFolder();
        var settings = FoldersAndPorts(temp.Path);
        settings["Publish:StatusIntervalSeconds"] = "0";

        var ex = Assert.Throws<ConfigurationException>(() => HumWatchHost.Build(new HumWatchHostSettings { Sources = SettingsSources.Isolated(settings) }));

        Assert.Contains("Publish:StatusIntervalSeconds", ex.Message, StringComparison.Ordinal);
        Assert.False(Directory.Exists(Path.Combine(temp.Path, "logs")));
        Assert.False(File.Exists(Path.Combine(temp.Path, "humwatch.db")));
    }

    [Fact]
    public void A_misspelt_key_stops_the_build_naming_the_key_it_meant()
    {
        using var temp = new TempFolder();
        var settings = FoldersAndPorts(temp.Path);
        settings["Publish:StatusIntervalSecond"] = "5";

        var ex = Assert.Throws<ConfigurationException>(() => HumWatchHost.Build(new HumWatchHostSettings { Sources = SettingsSources.Isolated(settings) }));

        Assert.Contains("Publish:StatusIntervalSecond", ex.Message, StringComparison.Ordinal);
        Assert.Contains("StatusIntervalSeconds", ex.Message, StringComparison.Ordinal);
    }
}
