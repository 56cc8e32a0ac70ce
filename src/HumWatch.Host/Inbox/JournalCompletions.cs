using HumWatch.Host.Store;

namespace HumWatch.Host.Inbox;

/// <summary>A checked file's outcome, waiting until its journal entry is stored before the file leaves the inbox.</summary>
/// <param name="Source">The file in the inbox.</param>
/// <param name="Target">Where it is moved once the journal entry is stored.</param>
/// <param name="Describe">The log line written after the move.</param>
internal sealed record JournalCompletion(
    string Source, string Target, string Sha256, long SizeBytes, FileJournalState State, string? ReportPath, string? Reason, Action Describe)
{
    /// <summary>Set once the journal entry is in the store; the file may then be moved.</summary>
    public bool Stored { get; set; }
}

/// <summary>
/// The journal entries of checked files that the store refused. A file stays in the inbox until its entry is stored, so
/// nothing is acknowledged that the store does not have; a stop meanwhile leaves the entry "received", and the next
/// start checks the file again. The inbox takes no new file while one waits here, so it holds at most a few. Thread-safe.
/// </summary>
internal sealed class JournalCompletions : IStoreBacklog
{
    private readonly FileJournal _journal;
    private readonly Lock _gate = new();
    private readonly List<JournalCompletion> _items = [];

    public JournalCompletions(FileJournal journal, StoreHealth health)
    {
        ArgumentNullException.ThrowIfNull(journal);
        ArgumentNullException.ThrowIfNull(health);
        _journal = journal;
        health.Register(this);
    }

    public string Name => "file journal entries";

    public int RetryOrder => 4;

    public int Waiting
    {
        get
        {
            lock (_gate)
            {
                return _items.Count(c => !c.Stored);
            }
        }
    }

    /// <summary>Files held, whether or not their entry is stored yet.</summary>
    public int Count
    {
        get
        {
            lock (_gate)
            {
                return _items.Count;
            }
        }
    }

    /// <summary>Stores the entry now; on a store failure keeps it for the retry and rethrows.</summary>
    public void Complete(JournalCompletion completion)
    {
        ArgumentNullException.ThrowIfNull(completion);
        try
        {
            Store(completion);
        }
        catch (Exception ex) when (StoreFaults.IsStoreFailure(ex))
        {
            Keep(completion);
            throw;
        }
    }

    /// <summary>Keeps a completion for the retry without trying the store.</summary>
    public void Keep(JournalCompletion completion)
    {
        lock (_gate)
        {
            _items.Add(completion);
        }
    }

    /// <summary>Completions whose entry is stored, taken out: their files can be moved now.</summary>
    public IReadOnlyList<JournalCompletion> TakeStored()
    {
        lock (_gate)
        {
            var done = _items.Where(c => c.Stored).ToList();
            foreach (var completion in done)
            {
                _items.Remove(completion);
            }

            return done;
        }
    }

    public int RetryWaiting(out Exception? failure)
    {
        failure = null;
        JournalCompletion[] waiting;
        lock (_gate)
        {
            waiting = [.. _items.Where(c => !c.Stored)];
        }

        var stored = 0;
        foreach (var completion in waiting)
        {
            try
            {
                Store(completion);
            }
            catch (Exception ex)
            {
                failure = ex;
                return stored;
            }

            stored++;
        }

        return stored;
    }

    private void Store(JournalCompletion completion)
    {
        try
        {
            _journal.Complete(completion.Sha256, completion.SizeBytes, completion.State, completion.ReportPath, completion.Reason);
        }
        catch (InvalidOperationException ex) when (!StoreFaults.IsStoreFailure(ex))
        {
            // The entry is no longer "received": completed already (a retry whose commit the failure report hid). Done.
        }

        lock (_gate)
        {
            completion.Stored = true;
        }
    }
}
