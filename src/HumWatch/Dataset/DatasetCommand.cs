using HumWatch.Cli.Commands;
using HumWatch.Host.Checking;
using Spectre.Console;

namespace HumWatch.Cli.Dataset;

/// <summary>What `check` was asked: the files and folders, and where the reports go.</summary>
/// <param name="Table">The audit table's file, "-" for stdout, or null.</param>
/// <param name="SkipChecked">An earlier table whose files are not checked again, or null.</param>
internal sealed record CheckRequest(IReadOnlyList<string> Inputs, bool Json, string? Table, string? SkipChecked)
{
    public bool TableToStdout => Table == "-";
}

/// <summary>
/// The body of `check` once the settings are good: walks the inputs, checks the files side by side, and writes each
/// report (readable text, JSON Lines, table rows) in walk order as it is done.
/// </summary>
internal static class DatasetCommand
{
    private static readonly TimeSpan ProgressRefresh = TimeSpan.FromMilliseconds(250);

    public static async Task<int> RunAsync(CheckRequest request, Func<int, RecordingChecker> checkerFor, CancellationToken cancellationToken)
    {
        var walk = DatasetWalk.Collect(request.Inputs);
        ReportPassedOver(walk.PassedOver);
        var isDataset = walk.Files.Count != 1 || request.Inputs.Any(Directory.Exists);
        if (walk.Files.Count == 0)
        {
            Console.Error.WriteLine($"humwatch check: no recording found in {string.Join(", ", request.Inputs)} (EDF/EDF+/BDF/BDF+ by content or name, .csv, numeric .tsv/.txt).");
            return ExitCodes.BadInput;
        }

        CheckedFiles? alreadyChecked = null;
        if (request.SkipChecked is { } earlier && File.Exists(earlier))
        {
            try
            {
                alreadyChecked = CheckedFiles.Read(earlier);
            }
            catch (Exception ex) when (ex is FormatException or IOException or UnauthorizedAccessException)
            {
                Console.Error.WriteLine($"humwatch check: --skip-checked {earlier}: {ex.Message}");
                return ExitCodes.BadInput;
            }
        }

        using var table = OpenTable(request, alreadyChecked, walk.Files);
        if (table is { Error: { } tableError })
        {
            Console.Error.WriteLine($"humwatch check: --table {request.Table}: {tableError}");
            return ExitCodes.BadInput;
        }

        var progress = isDataset && ShowsProgress(request) ? new DatasetProgress(walk.Files) : null;
        var console = progress is null ? null : AnsiConsole.Create(new AnsiConsoleSettings { Out = new AnsiConsoleOutput(Console.Error) });

        // Readable text goes to stdout; on a terminal that also shows the progress line, through the same console so
        // the two do not overwrite each other.
        var text = request.Json || request.TableToStdout ? null : (console is not null && !Console.IsOutputRedirected ? new LiveConsoleWriter(console) : Console.Out);
        var anyHint = false;
        void OnChecked(CheckedFile done)
        {
            var report = done.Report;
            if (report.Error is not null)
            {
                Console.Error.WriteLine($"humwatch check: {report.Error}");
            }

            if (request.Json)
            {
                Console.Out.WriteLine(CheckCommand.JsonLine(report));
                Console.Out.Flush();
            }
            else if (text is not null)
            {
                anyHint |= CheckReportText.WriteBlock(text, report);
            }

            table?.Write(CheckTable.Row(done.File.TablePath, report, done.CheckTime, done.Fingerprint));
        }

        var check = new DatasetCheck(checkerFor, Environment.ProcessorCount, alreadyChecked, fingerprint: table is not null);
        DatasetOutcome outcome;
        if (progress is null)
        {
            // A lone file keeps its own progress line on stderr for long files, as before folders were taken.
            var single = isDataset ? null : new CheckCommand.StderrProgress(walk.Files[0].ReportPath);
            outcome = await check.RunAsync(walk.Files, OnChecked, null, single, cancellationToken).ConfigureAwait(false);
            single?.Finish();
        }
        else
        {
            outcome = await ShowProgressAsync(console!, progress, () => check.RunAsync(walk.Files, OnChecked, progress, null, cancellationToken)).ConfigureAwait(false);
        }

        if (text is not null)
        {
            CheckReportText.WriteCaution(text, anyHint);
        }

        if (isDataset)
        {
            var skipped = outcome.Skipped > 0 ? $", {outcome.Skipped} skipped as already in {request.SkipChecked}" : "";
            Console.Error.WriteLine($"humwatch check: {outcome.Checked} file(s) checked{skipped}; exit code {outcome.WorstExitCode}.");
        }

        return outcome.WorstExitCode;
    }

    /// <summary>A progress line only for a person watching: stderr on a terminal, and no JSON or table on that terminal's stdout.</summary>
    private static bool ShowsProgress(CheckRequest request) =>
        !Console.IsErrorRedirected && !request.Json && !(request.TableToStdout && !Console.IsOutputRedirected);

    private static async Task<DatasetOutcome> ShowProgressAsync(IAnsiConsole console, DatasetProgress progress, Func<Task<DatasetOutcome>> run)
    {
        DatasetOutcome outcome = null!;
        await console.Progress()
            .AutoClear(false)
            .Columns(new TaskDescriptionColumn { Alignment = Justify.Left }, new ProgressBarColumn(), new PercentageColumn(), new TransferSpeedColumn(), new RemainingTimeColumn())
            .StartAsync(async context =>
            {
                var task = context.AddTask(Markup.Escape(progress.Snapshot().Describe()), maxValue: Math.Max(1, progress.TotalBytes));
                var work = run();
                while (!work.IsCompleted)
                {
                    Update(task, progress.Snapshot());
                    await Task.WhenAny(work, Task.Delay(ProgressRefresh)).ConfigureAwait(false);
                }

                outcome = await work.ConfigureAwait(false);
                Update(task, progress.Snapshot());
                task.StopTask();
            }).ConfigureAwait(false);
        return outcome;
    }

    private static void Update(ProgressTask task, DatasetProgressSnapshot snapshot)
    {
        task.Value = snapshot.DoneBytes;
        task.Description = Markup.Escape(snapshot.Describe());
    }

    private static void ReportPassedOver(IReadOnlyList<PassedOver> passedOver)
    {
        // Side tables and notes are normal in a dataset: counted, not listed. Links and unreadable folders are named.
        var notRecordings = passedOver.Count(p => p.Reason == PassedOver.NotARecording);
        foreach (var item in passedOver.Where(p => p.Reason != PassedOver.NotARecording))
        {
            Console.Error.WriteLine($"humwatch check: passed over {item.Path}: {item.Reason}.");
        }

        if (notRecordings > 0)
        {
            Console.Error.WriteLine($"humwatch check: passed over {notRecordings} file(s) that are not recordings.");
        }
    }

    private static TableOutput? OpenTable(CheckRequest request, CheckedFiles? alreadyChecked, IReadOnlyList<DatasetFile> files)
    {
        if (request.Table is not { } path)
        {
            return null;
        }

        var withBids = files.Any(f => BidsEntities.Parse(f.TablePath) is not null);
        if (request.TableToStdout)
        {
            return TableOutput.Create(Console.Out, CheckTable.Columns(withBids), ownsWriter: false);
        }

        try
        {
            var appending = alreadyChecked is not null && request.SkipChecked is { } earlier
                && Path.GetFullPath(earlier) == Path.GetFullPath(path);
            return appending ? TableOutput.Append(path, alreadyChecked!.Columns) : TableOutput.Create(path, CheckTable.Columns(withBids));
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            return TableOutput.Failed(ex.Message);
        }
    }
}
