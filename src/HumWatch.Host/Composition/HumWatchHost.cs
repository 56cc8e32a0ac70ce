using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Ledger;
using HumWatch.Core.Reporting;
using HumWatch.Host.Configuration;
using HumWatch.Host.Fleet;
using HumWatch.Host.Health;
using HumWatch.Host.Inbox;
using HumWatch.Host.Ingest;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Notify;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;
using HumWatch.Host.Web;
using HumWatch.Core.Summaries;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;
using Serilog;

namespace HumWatch.Host.Composition;

/// <summary>What a caller of <see cref="HumWatchHost.Build"/> can set.</summary>
public sealed class HumWatchHostSettings
{
    /// <summary>Where the settings come from; <see cref="SettingsBuilder"/> layers and binds them.</summary>
    public SettingsSources Sources { get; init; } = new();

    /// <summary>Extra registrations (the demo's room player, test doubles), given the bound settings.</summary>
    public Action<IServiceCollection, BoundSettings>? ConfigureServices { get; init; }

    /// <summary>Time source; tests pass a fake one. The default is the system clock.</summary>
    public TimeProvider? TimeProvider { get; init; }
}

/// <summary>Builds the HumWatch service: configuration, validation, logging and every hosted part.</summary>
public static class HumWatchHost
{
    /// <summary>
    /// Where a started host listens: the publish endpoint and the ingest endpoints as bound or connected, an ephemeral
    /// port (<c>tcp://127.0.0.1:*</c>) resolved to the port the system gave. Valid once the host has started.
    /// </summary>
    public static (string Publish, IReadOnlyList<string> Ingest) Endpoints(IHost host)
    {
        ArgumentNullException.ThrowIfNull(host);
        var publish = host.Services.GetRequiredService<ZmqPublisher>().Endpoint;
        var ingest = host.Services.GetServices<IHostedService>().OfType<SocketIngestService>().FirstOrDefault()?.Endpoints ?? [];
        return (publish, ingest);
    }

    /// <summary>The live page's address as served (the port Kestrel picked for port 0); null when Web:Enabled is false. Valid once the host has started.</summary>
    public static string? WebAddress(IHost host)
    {
        ArgumentNullException.ThrowIfNull(host);
        return host.Services.GetService<WebServer>()?.Address;
    }

    /// <summary>Builds the host. Every invalid setting is reported at once.</summary>
    /// <exception cref="ConfigurationException">A file is missing or invalid, or settings fail validation; the message names each key.</exception>
    public static IHost Build(HumWatchHostSettings settings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        var bound = SettingsBuilder.Build(settings.Sources);

        var builder = Microsoft.Extensions.Hosting.Host.CreateApplicationBuilder(new HostApplicationBuilderSettings
        {
            DisableDefaults = true,
            ContentRootPath = Directory.GetCurrentDirectory(),
        });
        builder.Services.AddSystemd();
        builder.Services.AddWindowsService(o => o.ServiceName = "HumWatch");
        builder.Services.Configure<HostOptions>(o => o.ShutdownTimeout = TimeSpan.FromSeconds(20));

        DataFolders.Prepare(bound);
        var logFiles = new LogFiles(bound.Logs);
        var serilog = new LoggerConfiguration()
            .MinimumLevel.Verbose()
            .MinimumLevel.Override("Microsoft", Serilog.Events.LogEventLevel.Warning)
            .Enrich.FromLogContext()
            .WriteTo.Logger(console => console
                .Filter.ByExcluding(IsStartFailureReport)
                .WriteTo.Console(restrictedToMinimumLevel: bound.Logs.ConsoleLevel, outputTemplate: "{Timestamp:HH:mm:ss} {Level:u3} {Message:lj}{NewLine}{Exception}", formatProvider: System.Globalization.CultureInfo.InvariantCulture))
            .WriteTo.Sink(logFiles)
            .CreateLogger();
        builder.Services.AddSerilog(serilog, dispose: true);

        var services = builder.Services;
        services.TryAddSingleton(settings.TimeProvider ?? TimeProvider.System);
        services.AddSingleton(bound);
        services.AddSingleton(bound.Analysis);
        services.AddSingleton(Options.Create(bound.Check));
        services.AddSingleton(Options.Create(bound.Alerts));
        services.AddSingleton(Options.Create(bound.Monitor));
        services.AddSingleton(Options.Create(bound.Publish));
        services.AddSingleton(Options.Create(bound.Store));
        services.AddSingleton(Options.Create(bound.Inbox));
        services.AddSingleton(Options.Create(bound.Site));
        services.AddSingleton(Options.Create(bound.Instance));
        services.AddSingleton(sp => OpenStore(bound.Store, bound.Instance.Name, sp.GetRequiredService<TimeProvider>()));
        services.AddSingleton(sp => new StreamSightings(sp.GetRequiredService<TimeProvider>()));
        services.AddSingleton<IAlertEventStore>(sp => sp.GetRequiredService<HumWatchStore>().Alerts);
        services.AddSingleton(sp => new StoreHealth(sp.GetRequiredService<HumWatchStore>().FullPath, sp.GetRequiredService<TimeProvider>(), sp.GetRequiredService<ILogger<StoreHealth>>()));
        services.AddSingleton<ResourceStatus>();
        services.AddSingleton(logFiles);
        services.AddSingleton(sp => new LedgerWriter(sp.GetRequiredService<HumWatchStore>().Ledger, sp.GetRequiredService<ILogger<LedgerWriter>>(), sp.GetRequiredService<TimeProvider>(), health: sp.GetRequiredService<StoreHealth>()));
        services.AddSingleton<IMinuteRowSink>(sp => sp.GetRequiredService<LedgerWriter>());
        services.AddSingleton(sp => new ZmqPublisher(bound.Publish, sp.GetRequiredService<ILogger<ZmqPublisher>>()));
        services.AddSingleton<IMessagePublisher>(sp => sp.GetRequiredService<ZmqPublisher>());
        services.AddSingleton<AlertDispatcher>();
        services.AddSingleton<IAlertEventSink>(sp => sp.GetRequiredService<AlertDispatcher>());

        services.AddSingleton<StreamSessionFactory>();

        // Hosted services stop in reverse order: ingest (added last) stops taking input first, then the inbox, then
        // the stream monitors drain what they hold and close their alerts, then the ledger writer writes the last rows, then
        // the store health retries what still waits and names what it could not store.
        services.AddHostedService(sp => sp.GetRequiredService<StoreHealth>());
        services.AddHostedService<LogFolderGuard>();
        services.AddHostedService(sp => sp.GetRequiredService<LedgerWriter>());

        // Started before and stopped after everything that raises or clears alerts, so no notification is missed.
        services.AddHumWatchNotify(bound.Notify, bound.Site, settings.Sources.Environment);

        // Before anything is analysed: the instance registers and closes the alerts its unclean stop left open. Stopped
        // after the stream monitors, so the clean-stop mark follows their last clears.
        services.AddSingleton<UnclosedAlertCloser>();
        services.AddHostedService<InstanceHeartbeat>();
        services.AddSingleton<StreamMonitorService>();
        services.AddHostedService(sp => sp.GetRequiredService<StreamMonitorService>());
        services.AddSingleton<InboxService>();
        services.AddHostedService(sp => sp.GetRequiredService<InboxService>());
        services.AddHumWatchSummaries(bound.Summaries);
        services.AddSingleton<ISpectrumPartSink>(sp => new DeferringSpectrumSink(sp.GetRequiredService<HumWatchStore>().Spectra, sp.GetRequiredService<StoreHealth>()));
        settings.ConfigureServices?.Invoke(services, bound);
        services.AddHumWatchIngest(bound.Ingest);
        services.AddHumWatchWeb(bound);
        return builder.Build();
    }

    /// <summary>
    /// The generic host logs "Hosting failed to start" with the whole stack trace before rethrowing; the caller prints
    /// a failure it expected in one line, so the console leaves that report out (the log files keep it).
    /// </summary>
    private static bool IsStartFailureReport(Serilog.Events.LogEvent logEvent) =>
        logEvent.Exception is not null
        && logEvent.Properties.TryGetValue("SourceContext", out var source)
        && source is Serilog.Events.ScalarValue { Value: "Microsoft.Extensions.Hosting.Internal.Host" }
        && Unwrap(logEvent.Exception) is StartFailureException;

    private static Exception Unwrap(Exception ex) => ex is AggregateException { InnerExceptions.Count: 1 } aggregate ? Unwrap(aggregate.InnerExceptions[0]) : ex;

    private static HumWatchStore OpenStore(StoreOptions options, string instance, TimeProvider time)
    {
        try
        {
            return new HumWatchStore(options, time, instance);
        }
        catch (Exception ex) when (ex is InvalidOperationException or IOException or UnauthorizedAccessException)
        {
            // The store names its file or server; the setting is what a person changes.
            throw new StartFailureException(options.Provider == StoreProvider.Postgres
                ? $"{ex.Message.TrimEnd('.')}. Store:ConnectionString (or Store:ConnectionStringFile) names this database: check the server, the database and the user's rights, or point it elsewhere."
                : $"{ex.Message.TrimEnd('.')}. Store:Path names this file: move the file away, or point Store:Path (or --data) elsewhere.", ex);
        }
    }
}
