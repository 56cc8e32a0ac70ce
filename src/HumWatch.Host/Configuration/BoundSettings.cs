using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Reporting;
using HumWatch.Host.Composition;
using HumWatch.Host.Inbox;
using HumWatch.Host.Ingest;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Notify;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;
using HumWatch.Host.Web;
using Microsoft.Extensions.Configuration;

namespace HumWatch.Host.Configuration;

/// <summary>
/// Every options class, bound once from one layered configuration and validated together. The service's registrations,
/// `check` and `summary` all take their options from here; nothing else binds configuration.
/// </summary>
public sealed class BoundSettings
{
    private BoundSettings(
        AnalysisOptions analysis,
        CheckLimits check,
        AlertOptions alerts,
        MonitorOptions monitor,
        PublishOptions publish,
        StoreOptions store,
        InboxOptions inbox,
        SiteOptions site,
        LogOptions logs,
        IngestOptions ingest,
        SummaryOutputOptions summaries,
        NotifyOptions notify,
        WebOptions web,
        InstanceOptions instance)
    {
        Analysis = analysis;
        Check = check;
        Alerts = alerts;
        Monitor = monitor;
        Publish = publish;
        Store = store;
        Inbox = inbox;
        Site = site;
        Logs = logs;
        Ingest = ingest;
        Summaries = summaries;
        Notify = notify;
        Web = web;
        Instance = instance;
    }

    /// <summary>Section "Analysis".</summary>
    public AnalysisOptions Analysis { get; }

    /// <summary>Section "Check".</summary>
    public CheckLimits Check { get; }

    /// <summary>Section "Alerts".</summary>
    public AlertOptions Alerts { get; }

    /// <summary>Section "Monitor".</summary>
    public MonitorOptions Monitor { get; }

    /// <summary>Section "Publish".</summary>
    public PublishOptions Publish { get; }

    /// <summary>Section "Store".</summary>
    public StoreOptions Store { get; }

    /// <summary>Section "Inbox".</summary>
    public InboxOptions Inbox { get; }

    /// <summary>Section "Site".</summary>
    public SiteOptions Site { get; }

    /// <summary>Section "Logs".</summary>
    public LogOptions Logs { get; }

    /// <summary>Section "Ingest".</summary>
    public IngestOptions Ingest { get; }

    /// <summary>Section "Summaries".</summary>
    public SummaryOutputOptions Summaries { get; }

    /// <summary>Section "Notify".</summary>
    public NotifyOptions Notify { get; }

    /// <summary>Section "Web".</summary>
    public WebOptions Web { get; }

    /// <summary>Section "Instance".</summary>
    public InstanceOptions Instance { get; }

    /// <summary>Binds every section strictly (unknown keys are errors) and validates all of them.</summary>
    /// <exception cref="ConfigurationException">Every problem at once, one line each, each naming its key.</exception>
    public static BoundSettings Bind(IConfiguration configuration) => Bind(configuration, sourceOf: null, []);

    /// <summary>
    /// Checks every key against the options classes (unknown sections and keys, values of the wrong type), then binds
    /// every section and validates all of them. The section names are this class's property names, the same names
    /// <see cref="SettingsSchema"/> reads, so the known keys and the bound ones are one list.
    /// </summary>
    /// <param name="configuration">The layered settings.</param>
    /// <param name="sourceOf">Names where a key was set, for the message about an unknown key; null names none.</param>
    /// <param name="earlierProblems">Problems found while layering (a mistyped environment variable), reported first.</param>
    /// <exception cref="ConfigurationException">Every problem at once, one line each, each naming its key.</exception>
    internal static BoundSettings Bind(IConfiguration configuration, Func<string, string?>? sourceOf, IReadOnlyList<string> earlierProblems)
    {
        ArgumentNullException.ThrowIfNull(configuration);
        var schema = SettingsSchema.Check(configuration, sourceOf);
        var errors = new List<string>(earlierProblems);
        errors.AddRange(schema.Errors);
        var analysis = Section<AnalysisOptions>(configuration, nameof(Analysis), schema, errors, o => o.Validate(nameof(Analysis)), ReplaceConfiguredSourceLists);
        var check = Section<CheckLimits>(configuration, nameof(Check), schema, errors, o => o.Validate(nameof(Check)));
        var alerts = Section<AlertOptions>(configuration, nameof(Alerts), schema, errors, o => o.Validate(nameof(Alerts)));
        var monitor = Section<MonitorOptions>(configuration, nameof(Monitor), schema, errors, o => o.Validate());
        var publish = Section<PublishOptions>(configuration, nameof(Publish), schema, errors, o => o.Validate());
        var store = Section<StoreOptions>(configuration, nameof(Store), schema, errors, o => o.Validate());
        var inbox = Section<InboxOptions>(configuration, nameof(Inbox), schema, errors, o => o.Validate());
        var site = Section<SiteOptions>(configuration, nameof(Site), schema, errors, o => o.Validate());
        var logs = Section<LogOptions>(configuration, nameof(Logs), schema, errors, o => o.Validate());
        var ingest = Section<IngestOptions>(configuration, nameof(Ingest), schema, errors, o => new IngestOptionsValidator().Validate(null, o).Failures?.ToList() ?? []);
        var summaries = Section<SummaryOutputOptions>(configuration, nameof(Summaries), schema, errors, o => o.Validate());
        var notify = Section<NotifyOptions>(configuration, nameof(Notify), schema, errors, o => o.Validate());
        var web = Section<WebOptions>(configuration, nameof(Web), schema, errors, o => o.Validate(publish.StatusIntervalSeconds));
        var instance = Section<InstanceOptions>(configuration, nameof(Instance), schema, errors, o => o.Validate());
        if (errors.Count > 0)
        {
            throw new ConfigurationException(string.Join(Environment.NewLine, errors));
        }

        return new BoundSettings(analysis, check, alerts, monitor, publish, store, inbox, site, logs, ingest, summaries, notify, web, instance);
    }

    private static T Section<T>(IConfiguration configuration, string name, SettingsSchema.SchemaCheck schema, List<string> errors, Func<T, IReadOnlyList<string>> validate, Action<IConfigurationSection, T>? prepare = null)
        where T : new()
    {
        var options = new T();
        if (schema.BadValueSections.Contains(name))
        {
            // A value of the wrong type is reported already; binding would only fail on it again.
            return options;
        }

        var section = configuration.GetSection(name);
        if (!section.Exists())
        {
            // Nothing set: the binder would leave the defaults as they are, after reflecting over the whole class.
            errors.AddRange(validate(options));
            return options;
        }

        prepare?.Invoke(section, options);
        try
        {
            // Unknown keys are reported already, with a suggestion; the rest of such a section is still bound and checked.
            section.Bind(options, o => o.ErrorOnUnknownConfiguration = !schema.UnknownSections.Contains(name));
        }
        catch (InvalidOperationException ex)
        {
            // A half-bound section would only add follow-on errors; its binding error is the one to fix.
            errors.Add($"{name}: {ex.Message}");
            return options;
        }

        errors.AddRange(validate(options));
        return options;
    }

    /// <summary>The binder appends to a list that already has items; a configured list must replace the default one.</summary>
    private static void ReplaceConfiguredSourceLists(IConfigurationSection analysis, AnalysisOptions options)
    {
        var sources = analysis.GetSection("Sources");
        if (sources.GetSection(nameof(options.Sources.DisplayRatesHz)).Exists())
        {
            options.Sources.DisplayRatesHz.Clear();
        }

        if (sources.GetSection(nameof(options.Sources.SiteTones)).Exists())
        {
            options.Sources.SiteTones.Clear();
        }
    }
}
