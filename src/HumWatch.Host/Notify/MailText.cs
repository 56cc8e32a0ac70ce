using System.Globalization;
using System.Text;
using HumWatch.Core.Alerts;
using HumWatch.Core.Reporting;
using HumWatch.Core.Summaries;
using HumWatch.Host.Serialization;

namespace HumWatch.Host.Notify;

/// <summary>The subject and plain-text body of one mail listing a batch of notifications, times in the site's zone.</summary>
internal static class MailText
{
    /// <summary>Most events listed in one mail; the rest of a backlog goes in the next mail, at once.</summary>
    public const int MaxEventsPerMail = 100;

    private static readonly CultureInfo C = CultureInfo.InvariantCulture;

    /// <summary>"HumWatch, Sleep lab 2: 3 alerts, 1 clear".</summary>
    public static string Subject(string siteName, IReadOnlyList<Notification> batch)
    {
        ArgumentNullException.ThrowIfNull(batch);
        return $"HumWatch, {siteName}: {Counts(batch)}";
    }

    /// <summary>One block per notification in the order they happened, then the caution that goes with every hint.</summary>
    public static string Body(string siteName, TimeZoneInfo zone, IReadOnlyList<Notification> batch)
    {
        ArgumentNullException.ThrowIfNull(zone);
        ArgumentNullException.ThrowIfNull(batch);
        var text = new StringBuilder();
        text.Append(C, $"HumWatch at {siteName} published {Counts(batch)}. Times are {zone.Id}.").AppendLine().AppendLine();
        for (var i = 0; i < batch.Count; i++)
        {
            text.Append(C, $"{i + 1}. ");
            Describe(text, batch[i], zone);
            text.AppendLine();
        }

        text.AppendLine("The store and the log keep every event; this mail repeats the published messages.");
        text.AppendLine();
        text.AppendLine(SafetyNotice.Text);
        return text.ToString();
    }

    private static string Counts(IReadOnlyList<Notification> batch)
    {
        var alerts = batch.Count(n => n.Kind == Publishing.Messages.AlertKind);
        var clears = batch.Count(n => n.Kind == Publishing.Messages.ClearKind);
        var summaries = batch.Count(n => n.Kind == Publishing.Messages.SummaryKind);
        var parts = new List<string>(3);
        Add(parts, alerts, "alert", "alerts");
        Add(parts, clears, "clear", "clears");
        Add(parts, summaries, "daily summary", "daily summaries");
        return string.Join(", ", parts);
    }

    private static void Add(List<string> parts, int count, string one, string many)
    {
        if (count > 0)
        {
            parts.Add(string.Create(C, $"{count} {(count == 1 ? one : many)}"));
        }
    }

    private static void Describe(StringBuilder text, Notification notification, TimeZoneInfo zone)
    {
        const string Indent = "   ";
        switch (notification.Event)
        {
            case AlertRaised r:
                text.Append(C, $"Alert raised in {r.StreamId}: {What(r)}, {r.Severity.ToText()}").AppendLine();
                text.Append(C, $"{Indent}{Measured(r.FrequencyHz, r.AmplitudeUvRms, "")}since {Local(r.OnsetUtc, zone)}").AppendLine();
                text.Append(C, $"{Indent}channels: {Channels(r.WorstChannels)}").AppendLine();
                text.Append(C, $"{Indent}hint: {r.Suggestion}").AppendLine();
                break;
            case AlertSeverityChanged s:
                text.Append(C, $"Alert in {s.StreamId} now {s.NewSeverity.ToText()} (was {s.PreviousSeverity.ToText()}): {What(s)}").AppendLine();
                text.Append(C, $"{Indent}{Measured(s.FrequencyHz, s.AmplitudeUvRms, "")}at {Local(s.Utc, zone)}").AppendLine();
                text.Append(C, $"{Indent}channels: {Channels(s.WorstChannels)}").AppendLine();
                break;
            case AlertCleared c:
                text.Append(C, $"Alert cleared in {c.StreamId}: {What(c)} ({c.Reason.ToText()})").AppendLine();
                text.Append(C, $"{Indent}{Measured(double.NaN, c.PeakAmplitudeUvRms, "peak ")}highest severity {c.PeakSeverity.ToText()}, lasted {Duration(c.DurationSeconds)}").AppendLine();
                text.Append(C, $"{Indent}cleared at {Local(c.Utc, zone)}").AppendLine();
                break;
            case null when notification.Summary is { } day:
                Describe(text, day);
                break;
            default:
                text.Append(C, $"{notification.Kind} in {notification.Stream}").AppendLine();
                break;
        }
    }

    private static void Describe(StringBuilder text, DaySummary day)
    {
        text.Append(C, $"Daily summary of {day.Stream} for {day.Day}: {day.Verdict.ToText()}").AppendLine();
        text.Append(C, $"   {day.HoursMonitored:0.#} h monitored, {day.AffectedMinutes:0} min affected, {day.Alerts.Raised} alerts raised");
        if (day.MaxAmplitudeUvRms is { } max)
        {
            text.Append(C, $", strongest line {Reported.UvRms(max):0.0} µV RMS");
        }

        text.AppendLine();
        foreach (var reason in day.VerdictReasons)
        {
            text.Append(C, $"   {reason}").AppendLine();
        }
    }

    /// <summary>"mains h1", "display 75 Hz h2 (aliased)", "Cz flat".</summary>
    private static string What(AlertEvent alertEvent) => alertEvent.Source.Aliased ? $"{alertEvent.Key.Label} (aliased)" : alertEvent.Key.Label;

    /// <summary>"50.02 Hz, 6.5 µV RMS, " — only what is known (faults have neither).</summary>
    private static string Measured(double frequencyHz, double amplitudeUvRms, string amplitudePrefix)
    {
        var text = new StringBuilder();
        if (double.IsFinite(frequencyHz))
        {
            text.Append(C, $"{Reported.Hz(frequencyHz):0.00} Hz, ");
        }

        if (double.IsFinite(amplitudeUvRms))
        {
            text.Append(C, $"{amplitudePrefix}{Reported.UvRms(amplitudeUvRms):0.0} µV RMS, ");
        }

        return text.ToString();
    }

    private static string Channels(IReadOnlyList<string> channels) => channels.Count == 0 ? "none named" : string.Join(", ", channels);

    private static string Local(DateTimeOffset utc, TimeZoneInfo zone) =>
        TimeZoneInfo.ConvertTime(utc, zone).ToString("yyyy-MM-dd HH:mm:ss zzz", C);

    private static string Duration(double seconds) => seconds switch
    {
        < 60 => string.Create(C, $"{seconds:0} s"),
        < 3600 => string.Create(C, $"{seconds / 60:0.#} min"),
        _ => string.Create(C, $"{seconds / 3600:0.#} h"),
    };
}
