using HumWatch.Host.Configuration;
using HumWatch.Host.Publishing;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Notify;

/// <summary>Registers notifications: nothing at all when every target is off (the default).</summary>
internal static class NotifyServiceCollectionExtensions
{
    /// <summary>
    /// Adds the notification service as a dispatch sink and hosted service, with the HttpClient the webhooks use. Call it
    /// before the analysis is registered: hosted services start in order and stop in reverse.
    /// </summary>
    /// <param name="services">The host's services.</param>
    /// <param name="options">Bound and validated "Notify" settings.</param>
    /// <param name="site">Site name and time zone, for mail.</param>
    /// <param name="environment">The environment a password variable is read from; null reads the process's.</param>
    public static IServiceCollection AddHumWatchNotify(this IServiceCollection services, NotifyOptions options, SiteOptions site, IReadOnlyDictionary<string, string?>? environment = null)
    {
        ArgumentNullException.ThrowIfNull(services);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(site);
        if (!options.AnyEnabled)
        {
            return services;
        }

        services.TryAddSingleton(TimeProvider.System);
        services.AddHttpClient(WebhookTarget.ClientName)
            .ConfigureHttpClient(client => client.Timeout = Timeout.InfiniteTimeSpan) // each attempt has its own limit
            .ConfigurePrimaryHttpMessageHandler(() => new SocketsHttpHandler
            {
                // A redirect would carry the body, and any token, to an address nobody configured.
                AllowAutoRedirect = false,
                PooledConnectionLifetime = TimeSpan.FromMinutes(5),
            })
            .RemoveAllLoggers(); // the factory's request logging would write the URL, query (and any secret in it) included

        Func<string, string?> variables = environment is null ? Environment.GetEnvironmentVariable : name => environment.GetValueOrDefault(name);
        services.AddSingleton(sp =>
        {
            var time = sp.GetRequiredService<TimeProvider>();
            var logger = sp.GetRequiredService<ILoggerFactory>().CreateLogger<NotifyTarget>();
            var clients = sp.GetRequiredService<IHttpClientFactory>();
            var targets = new List<NotifyTarget>();
            for (var i = 0; i < options.Webhooks.Count; i++)
            {
                if (options.Webhooks[i].Enabled)
                {
                    targets.Add(new WebhookTarget($"{NotifyOptions.SectionName}:Webhooks:{i}", options.Webhooks[i], options.Retry, options.QueueCapacity, clients, time, logger));
                }
            }

            if (options.Mail.Enabled)
            {
                targets.Add(new MailTarget($"{NotifyOptions.SectionName}:Mail", options.Mail, options.Retry, options.QueueCapacity, site, variables, time, logger));
            }

            return new NotificationService(targets, options, time, sp.GetRequiredService<ILogger<NotificationService>>());
        });
        services.AddSingleton<IDispatchSink>(sp => sp.GetRequiredService<NotificationService>());
        services.AddHostedService(sp => sp.GetRequiredService<NotificationService>());
        return services;
    }
}
