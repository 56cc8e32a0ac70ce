using System.CommandLine;
using System.Globalization;
using HumWatch.Host.Configuration;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;

namespace HumWatch.Cli.Commands;

/// <summary>`humwatch summary --day YYYY-MM-DD [--stream ID] [--out DIR] [--data DIR] [--config PATH]... [--set KEY=VALUE]...` and `humwatch summary --list`.</summary>
internal static class SummaryCommand
{
    public static Command Create()
    {
        var day = new Option<string?>("--day") { Description = "Local day to render, YYYY-MM-DD (site time zone from configuration)." };
        var stream = new Option<string?>("--stream") { Description = "Render only this stream (the day page still lists every room)." };
        var output = new Option<string?>("--out") { Description = "Output folder (default: Summaries:Folder from configuration)." };
        var list = new Option<bool>("--list") { Description = "List the local days the store holds, with their streams and whether their summaries were written." };
        var data = new Option<string?>("--data") { Description = "The data folder a 'run --data' or 'demo --data' used: reads its store and writes under its summaries folder." };
        var settings = new SettingsArguments();
        var command = settings.AddTo(new Command("summary", "Re-renders a day's summaries (JSON, Markdown page, PNG plots) from the store, or lists the days it holds.")
        {
            day,
            stream,
            output,
            list,
            data,
        });
        command.SetAction(parse => Run(
            parse.GetValue(day),
            parse.GetValue(stream),
            parse.GetValue(output),
            parse.GetValue(list),
            parse.GetValue(data),
            settings.ConfigFiles(parse),
            settings.Settings(parse),
            Console.Out,
            Console.Error));
        return command;
    }

    /// <summary>Runs the command; returns the exit code.</summary>
    internal static int Run(string? dayText, string? stream, string? output, bool list, string? dataFolder, string[] configFiles, string[] settings, TextWriter stdout, TextWriter stderr)
    {
        if (list == (dayText is not null))
        {
            stderr.WriteLine("humwatch summary: give either --day YYYY-MM-DD or --list.");
            return ExitCodes.BadInput;
        }

        DateOnly day = default;
        if (dayText is not null && !DateOnly.TryParseExact(dayText, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out day))
        {
            stderr.WriteLine($"humwatch summary: --day must be a date as YYYY-MM-DD (got \"{dayText}\").");
            return ExitCodes.BadInput;
        }

        if (CommandSettings.TrySources("summary", configFiles, settings, stderr, dataFolder) is not { } sources
            || CommandSettings.TryBuild("summary", sources, stderr) is not { } bound)
        {
            return ExitCodes.BadInput;
        }

        var storeOptions = bound.Store;
        var options = bound.Summaries;
        var zone = bound.Site.ResolveTimeZone();

        if (storeOptions.Provider == StoreProvider.Sqlite && !File.Exists(storeOptions.Path))
        {
            stderr.WriteLine($"humwatch summary: store {Path.GetFullPath(storeOptions.Path)} does not exist (Store:Path, or --data for the folder a 'run --data' or 'demo --data' used).");
            return ExitCodes.BadInput;
        }

        try
        {
            return list ? List(storeOptions, zone, stdout) : Render(storeOptions, options, bound.Site.Name, zone, day, stream, output, bound.Analysis.Sources.MainsHz, stdout, stderr);
        }
        catch (Exception ex) when (ex is InvalidOperationException or IOException or UnauthorizedAccessException)
        {
            stderr.WriteLine($"humwatch summary: {ex.Message}");
            return ExitCodes.BadInput;
        }
    }

    private static int List(StoreOptions storeOptions, TimeZoneInfo zone, TextWriter stdout)
    {
        var days = SummaryOnDemand.ListDays(storeOptions, zone);
        var path = storeOptions.Describe();
        if (days.Count == 0)
        {
            stdout.WriteLine($"The store {path} holds no days yet.");
            return ExitCodes.Ok;
        }

        stdout.WriteLine($"Days in {path} (time zone {zone.Id}):");
        foreach (var d in days)
        {
            stdout.WriteLine(string.Create(CultureInfo.InvariantCulture, $"  {d.Day:yyyy-MM-dd}  {d.HoursInDay} h  {d.Streams.Count} stream(s), {d.SummariesWritten} summary(ies) written  {string.Join(", ", d.Streams)}"));
        }

        return ExitCodes.Ok;
    }

    private static int Render(StoreOptions storeOptions, SummaryOutputOptions options, string siteName, TimeZoneInfo zone, DateOnly day, string? stream, string? output, double? siteGridHz, TextWriter stdout, TextWriter stderr)
    {
        var rendered = SummaryOnDemand.Render(storeOptions, options, siteName, zone, day, stream, output, siteGridHz);
        if (rendered.Count == 0)
        {
            stderr.WriteLine(stream is null
                ? string.Create(CultureInfo.InvariantCulture, $"humwatch summary: the store holds nothing for {day:yyyy-MM-dd} ({zone.Id}); see 'humwatch summary --list'.")
                : string.Create(CultureInfo.InvariantCulture, $"humwatch summary: the store holds nothing for stream \"{stream}\" on {day:yyyy-MM-dd} ({zone.Id})."));
            return ExitCodes.BadInput;
        }

        foreach (var s in rendered)
        {
            stdout.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{s.Stream}: {Core.Summaries.DayVerdictText.ToText(s.Verdict)}, monitored {s.HoursMonitored:0.0} h, affected {s.AffectedMinutes:0.#} min, alerts raised {s.Alerts.Raised}"));
        }

        stdout.WriteLine($"Written to {Path.GetFullPath(SummaryOnDemand.DayFolder(output ?? options.Folder, day))}");
        return ExitCodes.Ok;
    }
}
