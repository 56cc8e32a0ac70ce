using System.Text.Json.Serialization;
using HumWatch.Core.Alerts;
using HumWatch.Core.Faults;
using HumWatch.Core.Findings;
using HumWatch.Core.Reporting;
using HumWatch.Host.Serialization;
using HumWatch.Host.Store;

namespace HumWatch.Host.Web;

/// <summary>One stored alert event as the API gives it: the published messages' field names, plus the store's row id and the key's label.</summary>
internal sealed record AlertView(
    long Id,
    string Stream,
    string Key,
    string Label,
    string Event,
    string Kind,
    string? Source,
    int? Harmonic,
    bool Aliased,
    string? Fault,
    double? FrequencyHz,
    double? AmplitudeUvRms,
    double? ChannelShare,
    IReadOnlyList<string> WorstChannels,
    string Severity,
    string? Suggestion,
    string? Caution,
    double StreamSeconds,
    DateTimeOffset Utc,
    DateTimeOffset? OnsetUtc,
    double? DurationSeconds,
    double? PeakAmplitudeUvRms,
    string? PeakSeverity,
    string? Reason)
{
    public static AlertView From(StoredAlert a) => new(
        a.Id, a.Stream, a.Key.ToString(), a.Key.Label, a.Event.ToText(), a.Kind.ToText(),
        a.SourceName, a.Harmonic, a.Aliased, a.Key.FaultKind?.ToText(),
        Round(a.FrequencyHz, Reported.Hz), Round(a.AmplitudeUvRms, Reported.UvRms), Round(a.ChannelShare, Reported.Share), a.WorstChannels,
        a.Severity.ToText(), a.Suggestion, a.Suggestion is null ? null : SafetyNotice.Text, Reported.ClockSeconds(a.StreamSeconds), a.Utc, a.OnsetUtc,
        Round(a.DurationSeconds, Reported.Seconds), Round(a.PeakUvRms, Reported.UvRms), a.PeakSeverity?.ToText(), a.Reason?.ToText());

    private static double? Round(double? value, Func<double, double> rounding) => value is { } v && double.IsFinite(v) ? rounding(v) : null;
}

/// <summary>GET /api/v1/alerts.</summary>
internal sealed record AlertsView(DateTimeOffset SinceUtc, DateTimeOffset UntilUtc, int Limit, IReadOnlyList<AlertView> Alerts);

/// <summary>GET /api/v1/site: what the page needs to know about the site.</summary>
internal sealed record SiteView(string Name, string TimeZone, string Today, double SilentAfterSeconds, double StatusIntervalSeconds, string Caution);

/// <summary>One written day sheet of one room, with the addresses of its files.</summary>
internal sealed record SheetView(string Day, string Stream, string? Verdict, double? HoursMonitored, double? AffectedMinutes, SheetFiles Files);

/// <summary>Addresses of a day sheet's files; null for those not written (no spectrum stored that day).</summary>
internal sealed record SheetFiles(string Summary, string Page, string? Spectrum, string? Timeline, string? Mains);

/// <summary>GET /api/v1/summaries.</summary>
internal sealed record SheetsView(IReadOnlyList<SheetView> Summaries);

/// <summary>One readiness check.</summary>
internal sealed record CheckView(string Name, bool Ok, string? Reason);

/// <summary>GET /readyz.</summary>
internal sealed record ReadinessView(bool Ready, IReadOnlyList<CheckView> Checks);

/// <summary>Any refusal: what was wrong, naming the parameter.</summary>
internal sealed record ErrorView(string Error);

[JsonSourceGenerationOptions(PropertyNamingPolicy = JsonKnownNamingPolicy.CamelCase)]
[JsonSerializable(typeof(AlertsView))]
[JsonSerializable(typeof(SiteView))]
[JsonSerializable(typeof(SheetsView))]
[JsonSerializable(typeof(ReadinessView))]
[JsonSerializable(typeof(ErrorView))]
[JsonSerializable(typeof(SpectrumView))]
[JsonSerializable(typeof(InstancesView))]
[JsonSerializable(typeof(List<AlertView>), TypeInfoPropertyName = "ListAlertView")]
internal sealed partial class WebJsonContext : JsonSerializerContext
{
    /// <summary>Characters as themselves, as in every HumWatch JSON (responses are JSON, never pasted into HTML).</summary>
    public static WebJsonContext Output => field ??= new(OutputText.JsonOptions(Default.Options));
}
