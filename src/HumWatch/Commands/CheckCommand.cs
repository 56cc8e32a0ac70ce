using System.CommandLine;
using System.Text.Json;
using HumWatch.Cli.Dataset;
using HumWatch.Host.Checking;
using HumWatch.Host.Configuration;

namespace HumWatch.Cli.Commands;

/// <summary>
/// `humwatch check FILE|DIR... [--mains 50|60] [--json] [--table FILE|-] [--skip-checked FILE] [--config PATH]...
/// [--set KEY=VALUE]...`.
/// </summary>
internal static class CheckCommand
{
    public static Command Create()
    {
        var files = new Argument<string[]>("files")
        {
            Description = "Recordings to check (EDF, EDF+, BDF, BDF+ or CSV), or folders to walk for them (e.g. a BIDS dataset).",
            Arity = ArgumentArity.OneOrMore,
        };
        var mains = new Option<string?>("--mains")
        {
            Description = "Mains frequency of the site where the recordings were made: 50 or 60 Hz (default: from the settings, else decided from the data).",
            HelpName = "50|60",
        };
        mains.Validators.Add(result =>
        {
            var text = result.Tokens.Count > 0 ? result.Tokens[^1].Value : "";
            if (ParseMains(text) is null)
            {
                result.AddError($"--mains takes 50 or 60, the mains frequency of the site in Hz (got '{text}').");
            }
        });
        var json = new Option<bool>("--json") { Description = "Print the reports as JSON Lines: one report per line, written as each file is done." };
        var table = new Option<string?>("--table")
        {
            Description = "Write one tab-separated row per file to FILE ('-' for stdout): verdict, exit code, strongest line per source, faults, BIDS entities, size, time and content hash.",
            HelpName = "FILE|-",
        };
        var skipChecked = new Option<string?>("--skip-checked")
        {
            Description = "Skip files whose size, time and content hash already have a row in FILE (a table of an earlier run); with --table FILE the same file, new rows are appended to it.",
            HelpName = "FILE",
        };
        var settings = new SettingsArguments("Configuration file(s) layered over the defaults and ./appsettings.json, later files winning, e.g. config/site-60hz.json (repeatable).");
        var command = settings.AddTo(new Command("check", "Checks recordings once and reports every narrowband line and channel fault; exit code 0 pass, 1 contaminated past the limits, 2 unreadable input or bad arguments.")
        {
            files,
            mains,
            json,
            table,
            skipChecked,
        });
        command.SetAction((parse, cancellationToken) => RunAsync(
            new CheckRequest(parse.GetValue(files) ?? [], parse.GetValue(json), parse.GetValue(table), parse.GetValue(skipChecked)),
            ParseMains(parse.GetValue(mains)),
            settings.ConfigFiles(parse),
            settings.Settings(parse),
            cancellationToken));
        return command;
    }

    /// <summary>50 or 60 from "50" or "60"; null for anything else.</summary>
    internal static int? ParseMains(string? text) => text switch
    {
        "50" => 50,
        "60" => 60,
        _ => null,
    };

    /// <summary>
    /// For bad arguments with --json: the same "error" report per file as for bad settings, so a pipeline reading
    /// stdout gets JSON whatever went wrong. Does nothing without --json or when no file could be parsed.
    /// </summary>
    internal static void WriteArgumentErrorJson(System.CommandLine.ParseResult parse, IEnumerable<string> messages)
    {
        bool asJson;
        string[] files;
        try
        {
            asJson = parse.GetValue<bool>("--json");
            files = parse.GetValue<string[]>("files") ?? [];
        }
        catch (Exception ex) when (ex is InvalidOperationException or ArgumentException)
        {
            return; // the arguments are too broken to tell
        }

        if (asJson && files.Length > 0)
        {
            var why = "bad arguments: " + string.Join("; ", messages.Select(m => m.TrimEnd('.')));
            WriteJsonLines(files, why);
        }
    }

    /// <summary>The layers check reads, as every command does; --mains is a command-line setting applied after --set.</summary>
    internal static SettingsSources? Sources(string[] configFiles, string[] settings, int? mains, TextWriter stderr) =>
        CommandSettings.TrySources("check", configFiles, settings, stderr, after: mains is { } hz
            ? new Dictionary<string, string?> { ["Analysis:Sources:MainsHz"] = hz.ToString(System.Globalization.CultureInfo.InvariantCulture) }
            : null);

    private static async Task<int> RunAsync(CheckRequest request, int? mains, string[] configFiles, string[] settings, CancellationToken cancellationToken)
    {
        // While one core reads the settings, the other compiles and binds the analysis code (see CheckWarmUp).
        _ = CheckWarmUp.Start();
        using var settingsErrors = new StringWriter();
        var sources = Sources(configFiles, settings, mains, settingsErrors);
        var bound = sources is null ? null : CommandSettings.TryBuild("check", sources, settingsErrors);
        Func<int, RecordingChecker>? checkerFor = null;
        if (bound is not null)
        {
            try
            {
                _ = new RecordingChecker(bound.Analysis, bound.Check); // validates the settings before any file is read
                checkerFor = threads => new RecordingChecker(bound.Analysis, bound.Check, threads);
            }
            catch (ArgumentException ex)
            {
                settingsErrors.WriteLine($"humwatch check: configuration is not valid:{Environment.NewLine}  {ex.Message}");
            }
        }

        if (checkerFor is null)
        {
            // Bad settings: no file is checked. A pipeline reading --json still gets the report shape it parses, one
            // "error" report per file, exit code 2; the readable lines go to stderr either way.
            Console.Error.Write(settingsErrors.ToString());
            if (request.Json)
            {
                WriteJsonLines(request.Inputs, SettingsError(settingsErrors.ToString()));
            }

            return ExitCodes.BadInput;
        }

        return await DatasetCommand.RunAsync(request, checkerFor, cancellationToken).ConfigureAwait(false);
    }

    /// <summary>One "error" report per input, one per line.</summary>
    private static void WriteJsonLines(IEnumerable<string> inputs, string why)
    {
        foreach (var input in inputs)
        {
            Console.Out.WriteLine(JsonLine(new CheckReport { File = input, Verdict = HumWatch.Core.Reporting.Verdict.Error, Error = why }));
        }
    }

    /// <summary>A report as one JSON Lines line (no line end).</summary>
    internal static string JsonLine(CheckReport report) => JsonSerializer.Serialize(report, CheckReportJsonContext.Lines.CheckReport);

    /// <summary>The stderr lines about bad settings as one "error" text: "configuration is not valid: a; b".</summary>
    private static string SettingsError(string stderrText)
    {
        var lines = stderrText.Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries)
            .Select(l => l.StartsWith("humwatch check: ", StringComparison.Ordinal) ? l["humwatch check: ".Length..] : l)
            .Where(l => l != "configuration is not valid:")
            .ToList();
        return "configuration is not valid: " + string.Join("; ", lines.Select(l => l.TrimEnd('.')));
    }

    /// <summary>One progress line on stderr for long files, rewritten in place on a terminal, throttled otherwise.</summary>
    internal sealed class StderrProgress(string file) : IProgress<double>
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
