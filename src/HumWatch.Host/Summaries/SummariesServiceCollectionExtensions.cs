using HumWatch.Host.Configuration;
using HumWatch.Host.Store;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Options;

namespace HumWatch.Host.Summaries;

/// <summary>Registers the daily summaries.</summary>
public static class SummariesServiceCollectionExtensions
{
    /// <summary>Adds <paramref name="options"/> (bound and validated by <see cref="BoundSettings"/>), the summary store view and <see cref="DailySummaryService"/>.</summary>
    public static IServiceCollection AddHumWatchSummaries(this IServiceCollection services, SummaryOutputOptions options)
    {
        ArgumentNullException.ThrowIfNull(services);
        ArgumentNullException.ThrowIfNull(options);
        services.AddSingleton(Options.Create(options));
        services.AddSingleton(sp => new SummaryStore(sp.GetRequiredService<HumWatchStore>()));
        services.AddHostedService<DailySummaryService>();
        return services;
    }
}
