using HumWatch.Formats.Wire;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;

namespace HumWatch.Host.Ingest;

/// <summary>Registers the socket ingest: options, counters, queue, sample buffer pool and the hosted service.</summary>
public static class IngestServiceCollectionExtensions
{
    /// <summary>Adds socket ingest with <paramref name="options"/>, bound and validated by <see cref="Configuration.BoundSettings"/>.</summary>
    public static IServiceCollection AddHumWatchIngest(this IServiceCollection services, IngestOptions options)
    {
        ArgumentNullException.ThrowIfNull(services);
        ArgumentNullException.ThrowIfNull(options);
        services.AddSingleton(Options.Create(options));
        services.TryAddSingleton(TimeProvider.System);
        services.TryAddSingleton<IngestCounters>();
        services.TryAddSingleton(provider => new IngestQueue(
            options.QueueCapacity,
            provider.GetRequiredService<IngestCounters>(),
            provider.GetRequiredService<ILogger<IngestQueue>>(),
            provider.GetRequiredService<TimeProvider>(),
            options.WarningInterval,
            options.MaxWarningsPerInterval));
        services.TryAddSingleton(_ => new SampleBufferPool(options.BufferBytes));
        services.AddHostedService<SocketIngestService>();
        return services;
    }
}
