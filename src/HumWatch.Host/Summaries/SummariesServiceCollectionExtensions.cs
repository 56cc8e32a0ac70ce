using HumWatch.Host.Configuration;
using HumWatch.Host.Store;
using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Options;

namespace HumWatch.Host.Summaries;

/// <summary>Registers the daily summaries.</summary>
public static class SummariesServiceCollectionExtensions
{
    /// <summary>Binds and validates section "Summaries", and adds the summary store view and <see cref="DailySummaryService"/>.</summary>
    /// <exception cref="ConfigurationException">A setting is invalid; the message names each key.</exception>
    public static IServiceCollection AddHumWatchSummaries(this IServiceCollection services, IConfiguration configuration)
    {
        ArgumentNullException.ThrowIfNull(services);
        ArgumentNullException.ThrowIfNull(configuration);
        var options = Bind(configuration);
        services.AddSingleton(Options.Create(options));
        services.AddSingleton(sp => new SummaryStore(sp.GetRequiredService<HumWatchStore>(), sp.GetRequiredService<TimeProvider>()));
        services.AddHostedService<DailySummaryService>();
        return services;
    }

    /// <summary>Binds section "Summaries" strictly and validates it.</summary>
    /// <exception cref="ConfigurationException">Unknown keys, bad values or failed validation; the message names each key.</exception>
    public static SummariesOptions Bind(IConfiguration configuration)
    {
        ArgumentNullException.ThrowIfNull(configuration);
        var options = new SummariesOptions();
        ConfigLoader.BindStrict(configuration.GetSection(SummariesOptions.SectionName), options, SummariesOptions.SectionName);
        var errors = options.Validate();
        if (errors.Count > 0)
        {
            throw new ConfigurationException(string.Join(Environment.NewLine, errors));
        }

        return options;
    }
}
