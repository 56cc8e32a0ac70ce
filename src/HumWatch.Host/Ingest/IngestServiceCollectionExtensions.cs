using HumWatch.Formats.Wire;
using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;

namespace HumWatch.Host.Ingest;

/// <summary>Registers the socket ingest: options (section "Ingest", validated at start), counters, queue, sample buffer pool and the hosted service.</summary>
public static class IngestServiceCollectionExtensions
{
    /// <summary>Adds socket ingest bound to the "Ingest" section of <paramref name="configuration"/>.</summary>
    public static IServiceCollection AddHumWatchIngest(this IServiceCollection services, IConfiguration configuration)
    {
        ArgumentNullException.ThrowIfNull(services);
        ArgumentNullException.ThrowIfNull(configuration);
        services.AddOptions<IngestOptions>()
            .Bind(configuration.GetSection(IngestOptions.SectionName))
            .ValidateOnStart();
        services.TryAddEnumerable(ServiceDescriptor.Singleton<IValidateOptions<IngestOptions>, IngestOptionsValidator>());
        services.TryAddSingleton(TimeProvider.System);
        services.TryAddSingleton<IngestCounters>();
        services.TryAddSingleton(static provider =>
        {
            var options = provider.GetRequiredService<IOptions<IngestOptions>>().Value;
            return new IngestQueue(
                options.QueueCapacity,
                provider.GetRequiredService<IngestCounters>(),
                provider.GetRequiredService<ILogger<IngestQueue>>(),
                provider.GetRequiredService<TimeProvider>(),
                options.WarningInterval);
        });
        services.TryAddSingleton(static provider =>
            new SampleBufferPool(provider.GetRequiredService<IOptions<IngestOptions>>().Value.BufferBytes));
        services.AddHostedService<SocketIngestService>();
        return services;
    }
}
