using System.CommandLine;
using System.Text.Json;
using HumWatch.Host.Checking;
using HumWatch.Host.Configuration;

namespace HumWatch.Cli.Commands;

/// <summary>`humwatch check FILE... [--mains 50|60] [--json] [--config PATH]... [--set KEY=VALUE]...`.</summary>
internal static class CheckCommand
{
    public static Command Create()
    {
        var files = new Argument<string[]>("files")
        {
            Description = "Recordings to check (EDF, EDF+, BDF, BDF+ or CSV).",
            Arity = ArgumentArity.OneOrMore,
        };
        var mains = new Option<int?>("--mains")
        {
            Description = "Mains frequency of the site where the recordings were made: 50 or 60 Hz (default: from the settings, else decided from the data).",
        };
        mains.AcceptOnlyFromAmong("50", "60");
        var json = new Option<bool>("--json") { Description = "Print the report as JSON (an array when several files are given)." };
        var config = CommandSettings.ConfigOption("Configuration file(s) layered over the defaults and ./appsettings.json, later files winning, e.g. config/site-60hz.json (repeatable).");
        var set = CommandSettings.SetOption();

        var command = new Command("check", "Checks recordings once and reports every narrowband line and channel fault; exit code 0 pass, 1 contaminated past the limits, 2 unreadable input or bad arguments.")
        {
            files,
            mains,
            json,
            config,
            set,
        };
        command.SetAction(parse => Run(
            parse.GetValue(files) ?? [],
            parse.GetValue(mains),
            parse.GetValue(json),
            parse.GetValue(config) ?? [],
            parse.GetValue(set) ?? []));
        return command;
    }

    /// <summary>The layers check reads, as every command does; --mains is a command-line setting applied after --set.</summary>
    internal static SettingsSources? Sources(string[] configFiles, string[] settings, int? mains, TextWriter stderr)
    {
        var overrides = new Dictionary<string, string?>(StringComparer.OrdinalIgnoreCase);
        if (!CommandSettings.TryParseSettings("check", settings, overrides, stderr))
        {
            return null;
        }

        if (mains is { } hz)
        {
            overrides["Analysis:Sources:MainsHz"] = hz.ToString(System.Globalization.CultureInfo.InvariantCulture);
        }

        return new SettingsSources { ConfigFiles = configFiles, Overrides = overrides };
    }

    private static int Run(string[] files, int? mains, bool asJson, string[] configFiles, string[] settings)
    {
        var sources = Sources(configFiles, settings, mains, Console.Error);
        if (sources is null || CommandSettings.TryBuild("check", sources, Console.Error) is not { } bound)
        {
            return ExitCodes.BadInput;
        }

        RecordingChecker checker;
        try
        {
            checker = new RecordingChecker(bound.Analysis, bound.Check, Environment.ProcessorCount);
        }
        catch (ArgumentException ex)
        {
            Console.Error.WriteLine($"humwatch check: invalid settings:{Environment.NewLine}{ex.Message}");
            return ExitCodes.BadInput;
        }

        var reports = new List<CheckReport>(files.Length);
        foreach (var file in files)
        {
            var progress = new StderrProgress(file);
            var report = checker.Check(file, progress);
            progress.Finish();
            if (report.Error is not null)
            {
                Console.Error.WriteLine($"humwatch check: {report.Error}");
            }

            reports.Add(report);
        }

        if (asJson)
        {
            var text = reports.Count == 1
                ? JsonSerializer.Serialize(reports[0], CheckReportJsonContext.Default.CheckReport)
                : JsonSerializer.Serialize(reports, CheckReportJsonContext.Default.ListCheckReport);
            Console.Out.WriteLine(text);
        }
        else
        {
            CheckReportText.Write(Console.Out, reports);
        }

        return reports.Max(r => r.ExitCode);
    }

    /// <summary>One progress line on stderr for long files, rewritten in place on a terminal, throttled otherwise.</summary>
    private sealed class StderrProgress(string file) : IProgress<double>
    {
        private const double ReportStep = 0.1;
        private readonly bool _interactive = !Console.IsErrorRedirected;
        private readonly long _startTicks = Environment.TickCount64;
        private double _lastShown = -1;
        private bool _shown;

        public void Report(double value)
        {
            // Short files finish before anyone wants to know how far they got.
            if (Environment.TickCount64 - _startTicks < 2000)
            {
                return;
            }

            if (!_interactive && value - _lastShown < ReportStep)
            {
                return;
            }

            _lastShown = value;
            _shown = true;
            var line = $"checking {file}: {value * 100:0}%";
            Console.Error.Write(_interactive ? $"\r{line}   " : line + Environment.NewLine);
        }

        public void Finish()
        {
            if (_shown && _interactive)
            {
                Console.Error.WriteLine();
            }
        }
    }
}
