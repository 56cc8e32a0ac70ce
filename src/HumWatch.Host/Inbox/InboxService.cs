using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using HumWatch.Core.Reporting;
using HumWatch.Host.Checking;
using HumWatch.Host.Configuration;
using HumWatch.Host.Health;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Serialization;
using HumWatch.Host.Store;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;

namespace HumWatch.Host.Inbox;

/// <summary>
/// Watches the inbox folder. A file whose size and time stamp stay unchanged for a while is checked as a session of
/// its stream (alerts and ledger included); its report goes beside it in the archive, where the file is moved —
/// never deleted. Unreadable files go to the rejected folder with the reason. The store's journal makes a restart
/// neither lose nor repeat a file. A file leaves the inbox only once the store has its alerts, rows and journal entry;
/// while the store refuses writes no new file is taken. A removed inbox folder is created again.
/// </summary>
internal sealed class InboxService : BackgroundService
{
    private readonly InboxOptions _options;
    private readonly CheckLimits _limits;
    private readonly TimeZoneInfo _zone;
    private readonly HumWatchStore _store;
    private readonly StreamSessionFactory _sessions;
    private readonly LedgerWriter _ledger;
    private readonly TimeProvider _time;
    private readonly ILogger _logger;
    private readonly Dictionary<string, (long Size, DateTime WriteUtc, long SeenTicks)> _candidates = new(StringComparer.Ordinal);
    private readonly SemaphoreSlim _wake = new(0, 1);
    private readonly StoreHealth _health;
    private readonly FolderState _folder;
    private readonly JournalCompletions _completions;
    private FileSystemWatcher? _watcher;
    private volatile bool _watcherBroken;
    private bool _paused;

    /// <param name="sessions">Makes each file's stream sessions (alerts, ledger, spectra), as for live streams.</param>
    /// <param name="ledger">The ledger writer the sessions' rows go to; a file's rows are written before its journal entry is completed.</param>
    /// <param name="resources">The store's fault state and the inbox folder's state for the status; null makes its own.</param>
    public InboxService(
        IOptions<InboxOptions> options,
        IOptions<CheckLimits> limits,
        IOptions<SiteOptions> site,
        HumWatchStore store,
        StreamSessionFactory sessions,
        LedgerWriter ledger,
        ILogger<InboxService> logger,
        ResourceStatus? resources = null)
    {
        _options = options.Value;
        _limits = limits.Value;
        _zone = site.Value.ResolveTimeZone();
        _store = store;
        _sessions = sessions;
        _ledger = ledger;
        _time = sessions.Time;
        _logger = logger;
        _health = resources?.Store ?? new StoreHealth(store.FullPath, _time, logger);
        _folder = resources?.InboxFolder ?? new FolderState();
        _completions = new JournalCompletions(store.Files, _health);
    }

    /// <summary>Checked files held in the inbox until the store has their journal entry.</summary>
    internal int HeldCount => _completions.Count;

    /// <summary>Poll at least as often as files need to settle; a watcher event wakes the loop sooner.</summary>
    private TimeSpan ScanInterval => TimeSpan.FromSeconds(Math.Max(0.1, Math.Min(_options.RescanSeconds, Math.Max(0.5, _options.StableSeconds / 2))));

    public override Task StartAsync(CancellationToken cancellationToken)
    {
        if (_options.Enabled)
        {
            // Create the folders up front so a bad path stops the start with a clear error.
            Directory.CreateDirectory(_options.Folder);
            Directory.CreateDirectory(_options.ArchiveFolder);
            Directory.CreateDirectory(_options.RejectedFolder);
            Watch();
            _logger.Watching(Path.GetFullPath(_options.Folder));
        }
        else
        {
            _folder.Off();
        }

        return base.StartAsync(cancellationToken);
    }

    public override void Dispose()
    {
        _watcher?.Dispose();
        _wake.Dispose();
        base.Dispose();
    }

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        if (!_options.Enabled)
        {
            return;
        }

        var interval = ScanInterval;
        while (!stoppingToken.IsCancellationRequested)
        {
            try
            {
                ScanOnce(stoppingToken);
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                _logger.ScanFailed(ex, _options.Folder);
            }

            try
            {
                using var delay = CancellationTokenSource.CreateLinkedTokenSource(stoppingToken);
                var wait = _wake.WaitAsync(delay.Token);
                await Task.WhenAny(wait, Task.Delay(interval, _time, delay.Token)).ConfigureAwait(false);
                await delay.CancelAsync().ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                return;
            }
        }
    }

    /// <summary>Looks at the inbox once and processes every file that has settled. Tests call it directly.</summary>
    internal int ScanOnce(CancellationToken cancellationToken = default)
    {
        if (!FolderIsThere())
        {
            return 0;
        }

        var processed = MoveCompleted();
        if (_completions.Count > 0 || !_health.AllStored)
        {
            // Nothing new is claimed while the store refuses writes: a file stays here until the store can record it.
            if (!_paused)
            {
                _paused = true;
                _logger.PausedForStore(_health.StorePath, _health.Fault.ToText());
            }

            return processed;
        }

        _paused = false;
        var now = _time.GetTimestamp();
        var seen = new HashSet<string>(StringComparer.Ordinal);
        foreach (var path in Directory.EnumerateFiles(_options.Folder, "*", SearchOption.AllDirectories))
        {
            cancellationToken.ThrowIfCancellationRequested();
            var name = Path.GetFileName(path);
            if (name.StartsWith('.') || name.EndsWith(".part", StringComparison.OrdinalIgnoreCase) || name.EndsWith(".tmp", StringComparison.OrdinalIgnoreCase))
            {
                continue; // still being written under a temporary name
            }

            seen.Add(path);
            var info = new FileInfo(path);
            if (!info.Exists)
            {
                continue;
            }

            if (!_candidates.TryGetValue(path, out var previous) || previous.Size != info.Length || previous.WriteUtc != info.LastWriteTimeUtc)
            {
                _candidates[path] = (info.Length, info.LastWriteTimeUtc, now);
                if (_options.StableSeconds > 0)
                {
                    continue;
                }
            }
            else if (_time.GetElapsedTime(previous.SeenTicks, now).TotalSeconds < _options.StableSeconds)
            {
                continue;
            }

            _candidates.Remove(path);
            try
            {
                if (ProcessFile(info, cancellationToken))
                {
                    processed++;
                }
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                // Left in place: the next scan tries again once the file settles.
                _logger.ProcessFailed(ex, path);
            }
            catch (Exception ex) when (StoreFaults.IsStoreFailure(ex))
            {
                // Left in place, unclaimed: taken again once the store has everything that waits.
                _health.ReportFailure(ex, $"the journal entry of {path}");
                _logger.HeldForStore(path, _health.StorePath);
                return processed;
            }
        }

        foreach (var gone in _candidates.Keys.Where(k => !seen.Contains(k)).ToList())
        {
            _candidates.Remove(gone);
        }

        return processed;
    }

    /// <summary>Checks a settled file; true when it left the inbox (false while it waits for the store or another worker).</summary>
    private bool ProcessFile(FileInfo file, CancellationToken cancellationToken)
    {
        var streamId = StreamIdFor(file.FullName);
        var sha256 = HashOf(file.FullName);
        var modifiedUtc = new DateTimeOffset(file.LastWriteTimeUtc, TimeSpan.Zero);
        if (!_store.Files.TryBegin(file.FullName, file.Length, modifiedUtc, sha256, out var entry))
        {
            if (entry.State == FileJournalState.Received)
            {
                return false; // another worker holds it
            }

            var target = entry.State == FileJournalState.Archived
                ? UniqueTarget(Path.Combine(_options.ArchiveFolder, streamId), file.Name, sha256)
                : UniqueTarget(_options.RejectedFolder, file.Name, sha256);
            MoveFile(file.FullName, target);
            _logger.AlreadyProcessed(file.FullName, entry.State == FileJournalState.Archived ? "archived" : "rejected");
            return true;
        }

        JournalCompletion completion;
        try
        {
            completion = Check(file, streamId, sha256, entry, cancellationToken);
        }
        catch (Exception ex) when (StoreFaults.IsStoreFailure(ex))
        {
            _store.Files.Release(sha256, file.Length);
            throw;
        }

        return Finish(completion);
    }

    /// <summary>Checks a claimed file: its alerts and rows go out, its report or reason is written; returns its outcome.</summary>
    private JournalCompletion Check(FileInfo file, string streamId, string sha256, FileJournalEntry entry, CancellationToken cancellationToken)
    {
        var checker = new RecordingChecker(_sessions.Analysis, _limits);

        // A second attempt replays what the interrupted one already stored; the filter keeps it from doing so twice.
        var recheck = entry.Attempts > 1 ? new StoredEventFilter(_store.Alerts, _sessions.AlertSink) : null;
        DateTimeOffset? recordingStartUtc = null;
        var sessions = new List<StreamSession>();
        var report = checker.Check(
            file.FullName,
            progress: null,
            sessionFor: (group, groupReport) =>
            {
                // Read inside the check, and once: a read failure here becomes the file's error report.
                recordingStartUtc ??= RecordingStartUtc(file);
                var session = _sessions.CreateForFileGroup(streamId, sha256, group, recordingStartUtc.Value, groupReport, recheck);
                sessions.Add(session);
                return session;
            },
            cancellationToken);

        foreach (var session in sessions)
        {
            session.End();
        }

        if (recheck is not null)
        {
            _logger.RecheckSkipped(file.FullName, recheck.Skipped);
        }

        if (report.Error is not null)
        {
            var target = UniqueTarget(_options.RejectedFolder, file.Name, sha256);
            OutputText.WriteFile(target + ".reason.txt", report.Error + Environment.NewLine);
            var error = report.Error;
            return new JournalCompletion(file.FullName, target, sha256, file.Length, FileJournalState.Rejected, null, error, () => _logger.Rejected(file.FullName, error));
        }

        var archiveFolder = Path.Combine(_options.ArchiveFolder, streamId);
        var archived = UniqueTarget(archiveFolder, file.Name, sha256);
        var reportPath = archived + ".report.json";
        var archivedReport = new CheckReport
        {
            File = archived,
            Verdict = report.Verdict,
            VerdictReason = report.VerdictReason,
            Limits = report.Limits,
            Format = report.Format,
            SampleRateHz = report.SampleRateHz,
            ChannelCount = report.ChannelCount,
            DurationSeconds = report.DurationSeconds,
            MainsEstimateHz = report.MainsEstimateHz,
            MainsHz = report.MainsHz,
            MainsFrom = report.MainsFrom,
            Prefiltering = report.Prefiltering,
            Lines = report.Lines,
            ChannelFaults = report.ChannelFaults,
            SkippedSignals = report.SkippedSignals,
            Notes = report.Notes,
            Caution = report.Caution,
        };
        OutputText.WriteFile(reportPath, JsonSerializer.Serialize(archivedReport, CheckReportJsonContext.Output.CheckReport));

        return new JournalCompletion(
            file.FullName, archived, sha256, file.Length, FileJournalState.Archived, reportPath, null,
            () => _logger.Archived(file.FullName, streamId, report.Verdict.ToText(), report.Lines.Count, report.ChannelFaults.Count, archived));
    }

    /// <summary>
    /// Journal first, then move: a stop in between leaves an archived entry whose file is simply moved next time. The
    /// entry is written only once the file's minute rows and alert events are in the store; until then, and when the store
    /// refuses the entry, the file stays in the inbox and the store's retry writes the entry.
    /// </summary>
    private bool Finish(JournalCompletion completion)
    {
        if (!_health.IsFaulted && _ledger.Flush() && _health.Deferred == 0)
        {
            try
            {
                _completions.Complete(completion);
                Move(completion);
                return true;
            }
            catch (Exception ex) when (StoreFaults.IsStoreFailure(ex))
            {
                _health.ReportFailure(ex, $"the journal entry of {completion.Source}");
            }
        }
        else
        {
            _completions.Keep(completion);
        }

        _logger.CompletionDeferred(completion.Source, _health.StorePath);
        return false;
    }

    /// <summary>Moves the held files whose journal entry the store's retry has written; returns how many.</summary>
    private int MoveCompleted()
    {
        var moved = 0;
        foreach (var completion in _completions.TakeStored())
        {
            try
            {
                Move(completion);
                moved++;
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                // The journal says done; the file is moved like any already processed copy when it is seen again.
                _logger.ProcessFailed(ex, completion.Source);
            }
        }

        return moved;
    }

    private static void Move(JournalCompletion completion)
    {
        MoveFile(completion.Source, completion.Target);
        completion.Describe();
    }

    /// <summary>True when the inbox folder is there, created again if it was removed; false while it cannot be.</summary>
    private bool FolderIsThere()
    {
        var folder = Path.GetFullPath(_options.Folder);
        if (Directory.Exists(folder))
        {
            if (_folder.Back())
            {
                _logger.FolderBack(folder);
            }

            if (_watcherBroken)
            {
                Watch();
            }

            return true;
        }

        try
        {
            Directory.CreateDirectory(folder);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            if (_folder.Missing(_time.GetUtcNow()))
            {
                _logger.FolderMissing(folder, ex.Message, ScanInterval.TotalSeconds);
            }

            return false;
        }

        if (_folder.Recreated())
        {
            _logger.FolderBack(folder);
        }
        else
        {
            _logger.FolderRecreated(folder);
        }

        _candidates.Clear();
        Watch();
        return true;
    }

    /// <summary>A new watcher on the folder; the old one (of a folder since removed) is let go.</summary>
    private void Watch()
    {
        _watcher?.Dispose();
        _watcher = null;
        try
        {
            var watcher = new FileSystemWatcher(_options.Folder) { IncludeSubdirectories = true };
            watcher.Created += (_, _) => Wake();
            watcher.Changed += (_, _) => Wake();
            watcher.Renamed += (_, _) => Wake();
            watcher.Error += (_, _) => _watcherBroken = true;
            watcher.EnableRaisingEvents = true;
            _watcher = watcher;
            _watcherBroken = false;
        }
        catch (Exception ex) when (ex is IOException or ArgumentException or UnauthorizedAccessException)
        {
            // The folder went again: the rescan still finds files, and the next scan tries a watcher again.
            _watcherBroken = true;
        }
    }

    private DateTimeOffset RecordingStartUtc(FileInfo file)
    {
        try
        {
            using var reader = Formats.RecordingReader.Open(file.FullName);
            if (reader.Info.StartLocal is { } local)
            {
                var unspecified = DateTime.SpecifyKind(local, DateTimeKind.Unspecified);
                return new DateTimeOffset(TimeZoneInfo.ConvertTimeToUtc(unspecified, _zone), TimeSpan.Zero);
            }
        }
        catch (Exception ex) when (ex is Formats.RecordingFormatException or IOException or ArgumentException)
        {
            // The checker reports the problem; the time only places the ledger rows.
        }

        return new DateTimeOffset(file.LastWriteTimeUtc, TimeSpan.Zero);
    }

    /// <summary>Stream id of a dropped file: its first folder below the inbox, else its stem; reduced to [A-Za-z0-9._-], at most 64.</summary>
    internal string StreamIdFor(string path)
    {
        var relative = Path.GetRelativePath(_options.Folder, path);
        var parts = relative.Split(Path.DirectorySeparatorChar, StringSplitOptions.RemoveEmptyEntries);
        var raw = parts.Length > 1 ? parts[0] : Path.GetFileNameWithoutExtension(path);
        return SanitizeStreamId(raw);
    }

    internal static string SanitizeStreamId(string raw)
    {
        var builder = new StringBuilder(Math.Min(raw.Length, 64));
        foreach (var c in raw)
        {
            if (builder.Length == 64)
            {
                break;
            }

            builder.Append(char.IsAsciiLetterOrDigit(c) || c is '.' or '_' or '-' ? c : '-');
        }

        var id = builder.ToString().Trim('.');
        return id.Length == 0 ? "file" : id;
    }

    private static string HashOf(string path)
    {
        using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, 1 << 16, FileOptions.SequentialScan);
        return Convert.ToHexStringLower(SHA256.HashData(stream));
    }

    /// <summary>A path in <paramref name="folder"/> for <paramref name="name"/> that does not overwrite anything.</summary>
    private static string UniqueTarget(string folder, string name, string sha256)
    {
        Directory.CreateDirectory(folder);
        var target = Path.Combine(folder, name);
        if (!File.Exists(target))
        {
            return target;
        }

        var stem = Path.GetFileNameWithoutExtension(name);
        var extension = Path.GetExtension(name);
        for (var i = 0; ; i++)
        {
            var suffix = i == 0 ? sha256[..8] : $"{sha256[..8]}-{i}";
            target = Path.Combine(folder, $"{stem}.{suffix}{extension}");
            if (!File.Exists(target))
            {
                return target;
            }
        }
    }

    private static void MoveFile(string from, string to) => File.Move(from, to, overwrite: false);

    private void Wake()
    {
        try
        {
            if (_wake.CurrentCount == 0)
            {
                _wake.Release();
            }
        }
        catch (SemaphoreFullException)
        {
            // Already signalled.
        }
        catch (ObjectDisposedException)
        {
            // Shutting down.
        }
    }
}
