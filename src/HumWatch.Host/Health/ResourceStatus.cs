using HumWatch.Host.Store;

namespace HumWatch.Host.Health;

/// <summary>A folder part of the status message (docs/messages.md).</summary>
/// <param name="State">"ok", "missing" (gone and not yet created again) or "off" (not used).</param>
/// <param name="Since">When it went missing; null otherwise.</param>
/// <param name="Recreated">Times the service created it again after it was removed while running.</param>
internal sealed record FolderStatus(string State, DateTimeOffset? Since, int Recreated);

/// <summary>Whether a folder the service writes to is there. Thread-safe.</summary>
internal sealed class FolderState
{
    private readonly Lock _gate = new();
    private string _state = "ok";
    private DateTimeOffset? _since;
    private int _recreated;

    /// <summary>The folder is not used (the inbox is off).</summary>
    public void Off()
    {
        lock (_gate)
        {
            (_state, _since) = ("off", null);
        }
    }

    /// <summary>The folder was removed and has been created again; true when it had been reported missing before.</summary>
    public bool Recreated()
    {
        lock (_gate)
        {
            var wasMissing = _state == "missing";
            (_state, _since) = ("ok", null);
            _recreated++;
            return wasMissing;
        }
    }

    /// <summary>The folder is back without the service creating it; true when it had been reported missing.</summary>
    public bool Back()
    {
        lock (_gate)
        {
            var wasMissing = _state == "missing";
            (_state, _since) = ("ok", null);
            return wasMissing;
        }
    }

    /// <summary>The folder is gone and cannot be created now; true the first time (when it is worth a warning).</summary>
    public bool Missing(DateTimeOffset nowUtc)
    {
        lock (_gate)
        {
            if (_state == "missing")
            {
                return false;
            }

            (_state, _since) = ("missing", nowUtc);
            return true;
        }
    }

    public FolderStatus Snapshot()
    {
        lock (_gate)
        {
            return new FolderStatus(_state, _since, _recreated);
        }
    }
}

/// <summary>What the status message says about the store and the folders, gathered in one place.</summary>
internal sealed class ResourceStatus(StoreHealth store)
{
    public StoreHealth Store { get; } = store;

    public FolderState LogFolder { get; } = new();

    public FolderState InboxFolder { get; } = new();
}

/// <summary>The store and folder states taken once, for every stream's status of one round.</summary>
internal sealed record ResourceSnapshot(StoreStatus Store, FolderStatus LogFolder, FolderStatus InboxFolder)
{
    public ResourceSnapshot(ResourceStatus resources)
        : this(resources.Store.Snapshot(), resources.LogFolder.Snapshot(), resources.InboxFolder.Snapshot())
    {
    }
}
