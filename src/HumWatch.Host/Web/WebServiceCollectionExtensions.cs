using HumWatch.Host.Configuration;
using HumWatch.Host.Ingest;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Web;

/// <summary>Registers the live page: the room board listening in on the publisher, the latest spectra, and the HTTP server.</summary>
internal static class WebServiceCollectionExtensions
{
    /// <summary>
    /// Adds the page when <see cref="WebOptions.Enabled"/>. Call after the publisher and the ingest are registered: the
    /// server then starts last and stops first, and the publisher the service uses becomes one the board listens in on.
    /// </summary>
    public static IServiceCollection AddHumWatchWeb(this IServiceCollection services, BoundSettings bound)
    {
        if (!bound.Web.Enabled)
        {
            return services;
        }

        services.AddSingleton(sp => new RoomBoard(bound.Web, sp.GetRequiredService<TimeProvider>(), sp.GetRequiredService<ILogger<RoomBoard>>(), bound.Instance.Name));
        services.AddSingleton(sp => new FleetRooms(sp.GetRequiredService<HumWatchStore>(), bound.Instance, bound.Web, sp.GetRequiredService<TimeProvider>(), sp.GetRequiredService<ILogger<FleetRooms>>()));
        services.AddSingleton(sp => new EventClients(bound.Web.MaxEventClients, sp.GetRequiredService<ILogger<EventClients>>()));
        services.AddSingleton(sp => new LiveSpectra(sp.GetRequiredService<TimeProvider>()));
        services.AddSingleton<ILiveFrameSink>(sp => sp.GetRequiredService<LiveSpectra>());
        services.Replace(ServiceDescriptor.Singleton<IMessagePublisher>(sp =>
            new PublisherTap(sp.GetRequiredService<ZmqPublisher>(), sp.GetRequiredService<RoomBoard>(), sp.GetRequiredService<EventClients>())));
        services.AddSingleton(sp => new Readiness(
            sp.GetRequiredService<HumWatchStore>(),
            sp.GetRequiredService<StoreHealth>(),
            sp.GetRequiredService<ZmqPublisher>(),
            () => sp.GetServices<IHostedService>().OfType<SocketIngestService>().FirstOrDefault()?.Endpoints ?? [],
            bound.Ingest.EffectiveEndpoints().Count,
            sp.GetRequiredService<IngestQueue>(),
            sp.GetRequiredService<IngestCounters>(),
            sp.GetRequiredService<TimeProvider>()));
        services.AddSingleton(sp => new WebServer(
            bound,
            sp.GetRequiredService<RoomBoard>(),
            sp.GetRequiredService<FleetRooms>(),
            sp.GetRequiredService<LiveSpectra>(),
            sp.GetRequiredService<EventClients>(),
            () => new WebApi(
                sp.GetRequiredService<RoomBoard>(),
                sp.GetRequiredService<FleetRooms>(),
                sp.GetRequiredService<LiveSpectra>(),
                sp.GetRequiredService<HumWatchStore>(),
                new DailySummaryRenderer(sp.GetRequiredService<SummaryStore>(), bound.Summaries, bound.Site.Name, bound.Site.ResolveTimeZone(), bound.Analysis.Sources.MainsHz),
                bound,
                sp.GetRequiredService<Readiness>(),
                sp.GetRequiredService<TimeProvider>()),
            () => new HumWatchMetrics(
                sp.GetRequiredService<StreamMonitorService>(),
                sp.GetRequiredService<IngestCounters>(),
                sp.GetRequiredService<IngestQueue>(),
                sp.GetRequiredService<RoomBoard>(),
                sp.GetRequiredService<StoreHealth>(),
                sp.GetRequiredService<EventClients>()),
            sp.GetRequiredService<HumWatchStore>(),
            sp.GetRequiredService<ILoggerFactory>(),
            sp.GetRequiredService<TimeProvider>()));
        services.AddHostedService(sp => sp.GetRequiredService<WebServer>());
        return services;
    }
}
