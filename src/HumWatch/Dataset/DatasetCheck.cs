using System.Diagnostics;
using HumWatch.Host.Checking;

namespace HumWatch.Cli.Dataset;

/// <summary>One checked file's outcome, handed on in walk order.</summary>
internal sealed record CheckedFile(DatasetFile File, CheckReport Report, TimeSpan CheckTime, FileFingerprint? Fingerprint);

/// <summary>What a dataset check did, for its closing line and exit code.</summary>
internal sealed record DatasetOutcome(int Checked, int Skipped, int WorstExitCode);

/// <summary>
/// Checks many files side by side, one file per worker and one worker per core, each file analysed exactly as a check
/// of that file alone would (the report does not depend on how many files are in flight). Reports are handed on in
/// the walk's order as soon as every file before them is done, so output is the same on every run.
/// </summary>
internal sealed class DatasetCheck
{
    private readonly Func<int, RecordingChecker> _checkerFor;
    private readonly int _workers;
    private readonly CheckedFiles? _alreadyChecked;
    private readonly bool _fingerprint;

    /// <param name="checkerFor">A checker using the given number of threads for one file.</param>
    /// <param name="workers">Files in flight at once (≥ 1); a lone file gets every worker's thread instead.</param>
    /// <param name="alreadyChecked">Rows of an earlier table: files matching one are skipped.</param>
    /// <param name="fingerprint">Whether reports carry size, time and content hash (for a table).</param>
    public DatasetCheck(Func<int, RecordingChecker> checkerFor, int workers, CheckedFiles? alreadyChecked, bool fingerprint)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(workers, 1);
        _checkerFor = checkerFor;
        _workers = workers;
        _alreadyChecked = alreadyChecked;
        _fingerprint = fingerprint || alreadyChecked is not null;
    }

    /// <param name="onChecked">Called in walk order, one call at a time.</param>
    /// <param name="progress">The whole run's progress, or null.</param>
    /// <param name="fileProgress">For a lone file, the share of it read so far, or null.</param>
    public async Task<DatasetOutcome> RunAsync(
        IReadOnlyList<DatasetFile> files,
        Action<CheckedFile> onChecked,
        DatasetProgress? progress,
        IProgress<double>? fileProgress,
        CancellationToken cancellationToken)
    {
        var lone = files.Count == 1;
        var checker = _checkerFor(lone ? _workers : 1);
        var done = new CheckedFile?[files.Count];
        var skipped = new bool[files.Count];
        var skippedExit = new int[files.Count];
        var nextToHand = 0;
        var next = -1;
        var gate = new object();

        void Finish(int index, CheckedFile? result, int? skippedWith)
        {
            lock (gate)
            {
                done[index] = result;
                skipped[index] = skippedWith is not null;
                skippedExit[index] = skippedWith ?? 0;
                progress?.FileDone(index, result?.Report.Verdict);
                while (nextToHand < files.Count && (done[nextToHand] is not null || skipped[nextToHand]))
                {
                    if (done[nextToHand] is { } ready)
                    {
                        onChecked(ready);
                        done[nextToHand] = null; // handed on: the report need not be kept
                    }

                    nextToHand++;
                }
            }
        }

        var worstExit = 0;
        var checkedCount = 0;
        void Work()
        {
            int index;
            while ((index = Interlocked.Increment(ref next)) < files.Count)
            {
                cancellationToken.ThrowIfCancellationRequested();
                var file = files[index];
                if (TrySkip(file, out var recordedExit))
                {
                    InterlockedMax(ref worstExit, recordedExit);
                    Finish(index, null, recordedExit);
                    continue;
                }

                progress?.FileStarted(index);
                var watch = Stopwatch.StartNew();
                var report = checker.Check(file.ReportPath, progress?.For(index) ?? fileProgress, cancellationToken);
                var checkTime = watch.Elapsed;
                var fingerprint = _fingerprint ? Fingerprint(file) : null;
                InterlockedMax(ref worstExit, report.ExitCode);
                Interlocked.Increment(ref checkedCount);
                Finish(index, new CheckedFile(file, report, checkTime, fingerprint), null);
            }
        }

        var workers = Enumerable.Range(0, Math.Min(lone ? 1 : _workers, Math.Max(1, files.Count)))
            .Select(_ => Task.Factory.StartNew(Work, cancellationToken, TaskCreationOptions.LongRunning, TaskScheduler.Default))
            .ToArray();
        await Task.WhenAll(workers).ConfigureAwait(false);
        return new DatasetOutcome(checkedCount, skipped.Count(s => s), worstExit);
    }

    private bool TrySkip(DatasetFile file, out int exitCode)
    {
        exitCode = 0;
        if (_alreadyChecked is null)
        {
            return false;
        }

        try
        {
            return _alreadyChecked.TryFind(file, out exitCode);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            return false; // unreadable now: checked, so its row says why
        }
    }

    private static FileFingerprint? Fingerprint(DatasetFile file)
    {
        try
        {
            return FileFingerprint.WithHash(file.FullPath);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            return null;
        }
    }

    private static void InterlockedMax(ref int target, int value)
    {
        int current;
        while (value > (current = Volatile.Read(ref target)) && Interlocked.CompareExchange(ref target, value, current) != current)
        {
        }
    }
}
