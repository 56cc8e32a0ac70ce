using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Ledger;
using HumWatch.Core.Reporting;
using HumWatch.Host.Configuration;
using HumWatch.Host.Inbox;
using HumWatch.Host.Ingest;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;
using HumWatch.Core.Summaries;
using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;
using Serilog;
using Serilog.Formatting.Compact;

namespace HumWatch.Host.Composition;

/// <summary>What a caller of <see cref="HumWatchHost.Build"/> can set.</summary>
public sealed class HumWatchHostSettings
{
    /// <summary>JSON files layered over the embedded defaults and ./appsettings.json, in order.</summary>
    public IReadOnlyList<string> ConfigFiles { get; init; } = [];

    /// <summary>Key/value overrides applied last (command line).</summary>
    public IReadOnlyDictionary<string, string?> Overrides { get; init; } = new Dictionary<string, string?>();

    /// <summary>Whether ./appsettings.json is read when present. The default is true.</summary>
    public bool ReadWorkingDirectorySettings { get; init; } = true;

    /// <summary>Environment variables with this prefix override settings (HUMWATCH_Ingest__QueueCapacity=…). Null to ignore the environment.</summary>
    public string? EnvironmentPrefix { get; init; } = "HUMWATCH_";

    /// <summary>Extra registrations (the demo's room player, test doubles).</summary>
    public Action<IServiceCollection, IConfiguration>? ConfigureServices { get; init; }

    /// <summary>Time source; tests pass a fake one. The default is the system clock.</summary>
    public TimeProvider? TimeProvider { get; init; }
}

/// <summary>Builds the HumWatch service: configuration, validation, logging and every hosted part.</summary>
public static class HumWatchHost
{
    /// <summary>Defaults for a fresh machine: everything under ./humwatch-data, sockets on loopback.</summary>
    public static IReadOnlyDictionary<string, string?> EmbeddedDefaults { get; } = new Dictionary<string, string?>
    {
        ["Store:Path"] = "humwatch-data/humwatch.db",
        ["Logs:Folder"] = "humwatch-data/logs",
        ["Inbox:Folder"] = "humwatch-data/inbox",
        ["Inbox:ArchiveFolder"] = "humwatch-data/archive",
        ["Inbox:RejectedFolder"] = "humwatch-data/rejected",
        ["Summaries:Folder"] = "humwatch-data/summaries",
    };

    /// <summary>Builds the host. Every invalid setting is reported at once.</summary>
    /// <exception cref="ConfigurationException">A file is missing or invalid, or settings fail validation; the message names each key.</exception>
    public static IHost Build(HumWatchHostSettings settings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        var configuration = BuildConfiguration(settings);
        var bound = BoundOptions.From(configuration);

        var builder = Microsoft.Extensions.Hosting.Host.CreateApplicationBuilder(new HostApplicationBuilderSettings
        {
            DisableDefaults = true,
            ContentRootPath = Directory.GetCurrentDirectory(),
        });
        builder.Configuration.AddConfiguration(configuration);
        builder.Services.AddSystemd();
        builder.Services.AddWindowsService(o => o.ServiceName = "HumWatch");
        builder.Services.Configure<HostOptions>(o => o.ShutdownTimeout = TimeSpan.FromSeconds(20));

        Directory.CreateDirectory(bound.Logs.Folder);
        var serilog = new LoggerConfiguration()
            .MinimumLevel.Verbose()
            .MinimumLevel.Override("Microsoft", Serilog.Events.LogEventLevel.Warning)
            .Enrich.FromLogContext()
            .WriteTo.Console(restrictedToMinimumLevel: bound.Logs.ConsoleLevel, outputTemplate: "{Timestamp:HH:mm:ss} {Level:u3} {Message:lj}{NewLine}{Exception}", formatProvider: System.Globalization.CultureInfo.InvariantCulture)
            .WriteTo.File(Path.Combine(bound.Logs.Folder, "humwatch-.log"), restrictedToMinimumLevel: bound.Logs.FileLevel, rollingInterval: RollingInterval.Day, retainedFileCountLimit: bound.Logs.RetainedDays, formatProvider: System.Globalization.CultureInfo.InvariantCulture)
            .WriteTo.File(new CompactJsonFormatter(), Path.Combine(bound.Logs.Folder, "humwatch-.clef"), restrictedToMinimumLevel: bound.Logs.FileLevel, rollingInterval: RollingInterval.Day, retainedFileCountLimit: bound.Logs.RetainedDays)
            .CreateLogger();
        builder.Services.AddSerilog(serilog, dispose: true);

        var services = builder.Services;
        services.TryAddSingleton(settings.TimeProvider ?? TimeProvider.System);
        services.AddSingleton(bound.Analysis);
        services.AddSingleton(Options.Create(bound.Check));
        services.AddSingleton(Options.Create(bound.Alerts));
        services.AddSingleton(Options.Create(bound.Monitor));
        services.AddSingleton(Options.Create(bound.Publish));
        services.AddSingleton(Options.Create(bound.Store));
        services.AddSingleton(Options.Create(bound.Inbox));
        services.AddSingleton(Options.Create(bound.Site));
        services.AddSingleton(sp => new HumWatchStore(bound.Store, sp.GetRequiredService<TimeProvider>()));
        services.AddSingleton<IAlertEventStore>(sp => sp.GetRequiredService<HumWatchStore>());
        services.AddSingleton(sp => new LedgerWriter(sp.GetRequiredService<HumWatchStore>(), sp.GetRequiredService<ILogger<LedgerWriter>>(), sp.GetRequiredService<TimeProvider>()));
        services.AddSingleton<IMinuteRowSink>(sp => sp.GetRequiredService<LedgerWriter>());
        services.AddSingleton(sp => new ZmqPublisher(bound.Publish, sp.GetRequiredService<ILogger<ZmqPublisher>>()));
        services.AddSingleton<IMessagePublisher>(sp => sp.GetRequiredService<ZmqPublisher>());
        services.AddSingleton<AlertDispatcher>();
        services.AddSingleton<IAlertEventSink>(sp => sp.GetRequiredService<AlertDispatcher>());

        services.AddSingleton<StreamSessionFactory>();

        // Hosted services stop in reverse order: ingest (added last) stops taking input first, then the inbox, then
        // the stream monitors drain what they hold and close their alerts, then the ledger writer writes the last rows.
        services.AddHostedService(sp => sp.GetRequiredService<LedgerWriter>());
        services.AddSingleton<StreamMonitorService>();
        services.AddHostedService(sp => sp.GetRequiredService<StreamMonitorService>());
        services.AddSingleton<InboxService>();
        services.AddHostedService(sp => sp.GetRequiredService<InboxService>());
        services.AddHumWatchSummaries(configuration);
        services.AddSingleton<ISpectrumPartSink>(sp => sp.GetRequiredService<SummaryStore>());
        settings.ConfigureServices?.Invoke(services, configuration);
        services.AddHumWatchIngest(configuration);
        return builder.Build();
    }

    /// <summary>Layers defaults, ./appsettings.json, the given files, the environment and the overrides.</summary>
    public static IConfigurationRoot BuildConfiguration(HumWatchHostSettings settings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        var files = new List<string>();
        if (settings.ReadWorkingDirectorySettings && File.Exists("appsettings.json"))
        {
            files.Add("appsettings.json");
        }

        files.AddRange(settings.ConfigFiles);
        var builder = new ConfigurationBuilder().AddInMemoryCollection(EmbeddedDefaults);
        foreach (var file in files)
        {
            var full = Path.GetFullPath(file);
            if (!File.Exists(full))
            {
                throw new ConfigurationException($"{file}: configuration file not found.");
            }

            builder.AddJsonFile(full, optional: false, reloadOnChange: false);
        }

        if (settings.EnvironmentPrefix is { } prefix)
        {
            builder.AddEnvironmentVariables(prefix);
        }

        builder.AddInMemoryCollection(settings.Overrides);
        try
        {
            return builder.Build();
        }
        catch (Exception ex) when (ex is InvalidDataException or FormatException)
        {
            throw new ConfigurationException($"configuration: {ex.Message}", ex);
        }
    }

    /// <summary>Every options class bound from one configuration and validated together.</summary>
    internal sealed record BoundOptions(
        AnalysisOptions Analysis,
        CheckLimits Check,
        AlertOptions Alerts,
        MonitorOptions Monitor,
        PublishOptions Publish,
        StoreOptions Store,
        InboxOptions Inbox,
        SiteOptions Site,
        LogOptions Logs)
    {
        public static BoundOptions From(IConfiguration configuration)
        {
            var analysis = ConfigLoader.BindAnalysis(configuration);
            var bound = new BoundOptions(
                analysis,
                ConfigLoader.BindCheckLimits(configuration),
                Bind<AlertOptions>(configuration, "Alerts"),
                Bind<MonitorOptions>(configuration, "Monitor"),
                Bind<PublishOptions>(configuration, "Publish"),
                Bind<StoreOptions>(configuration, "Store"),
                Bind<InboxOptions>(configuration, "Inbox"),
                Bind<SiteOptions>(configuration, "Site"),
                Bind<LogOptions>(configuration, "Logs"));

            var ingest = new IngestOptions();
            configuration.GetSection(IngestOptions.SectionName).Bind(ingest);
            var ingestResult = new IngestOptionsValidator().Validate(Options.DefaultName, ingest);

            var errors = new List<string>();
            errors.AddRange(bound.Analysis.Validate());
            errors.AddRange(bound.Check.Validate());
            errors.AddRange(bound.Alerts.Validate());
            errors.AddRange(bound.Monitor.Validate());
            errors.AddRange(bound.Publish.Validate());
            errors.AddRange(bound.Store.Validate());
            errors.AddRange(bound.Inbox.Validate());
            errors.AddRange(bound.Site.Validate());
            errors.AddRange(bound.Logs.Validate());
            try
            {
                _ = SummariesServiceCollectionExtensions.Bind(configuration);
            }
            catch (ConfigurationException ex)
            {
                errors.Add(ex.Message);
            }

            if (ingestResult.Failed)
            {
                errors.AddRange(ingestResult.Failures ?? []);
            }

            if (errors.Count > 0)
            {
                throw new ConfigurationException(string.Join(Environment.NewLine, errors));
            }

            return bound;
        }

        private static T Bind<T>(IConfiguration configuration, string section)
            where T : new()
        {
            var options = new T();
            ConfigLoader.BindStrict(configuration.GetSection(section), options, section);
            return options;
        }
    }
}
