using HumWatch.Host.Configuration;

namespace HumWatch.Host.Composition;

/// <summary>
/// Creates the folders the service writes to and proves each writable before anything starts, so a bad path stops the
/// start with the setting that names it instead of failing later inside a service.
/// </summary>
internal static class DataFolders
{
    /// <exception cref="StartFailureException">A folder cannot be created or written; the message names its setting and path.</exception>
    public static void Prepare(BoundSettings bound)
    {
        var folders = new List<(string Key, string Path)>
        {
            ("Logs:Folder", bound.Logs.Folder),
        };
        if (bound.Store.Provider == Store.StoreProvider.Sqlite && Path.GetDirectoryName(Path.GetFullPath(bound.Store.Path)) is { Length: > 0 } storeFolder)
        {
            folders.Add(("Store:Path", storeFolder));
        }

        if (bound.Inbox.Enabled)
        {
            folders.Add(("Inbox:Folder", bound.Inbox.Folder));
            folders.Add(("Inbox:ArchiveFolder", bound.Inbox.ArchiveFolder));
            folders.Add(("Inbox:RejectedFolder", bound.Inbox.RejectedFolder));
        }

        if (bound.Summaries.Enabled)
        {
            folders.Add(("Summaries:Folder", bound.Summaries.Folder));
        }

        foreach (var (key, path) in folders)
        {
            var full = Path.GetFullPath(path);
            try
            {
                Directory.CreateDirectory(full);

                // An existing folder may still refuse writes. The probe's name starts with a dot and ends in .tmp,
                // which the inbox never takes, should another HumWatch watch the same folder.
                var probe = Path.Combine(full, $".humwatch-write-check-{Guid.NewGuid():N}.tmp");
                using (new FileStream(probe, FileMode.CreateNew, FileAccess.Write, FileShare.None, 1, FileOptions.DeleteOnClose))
                {
                }
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or NotSupportedException)
            {
                throw new StartFailureException($"{key}: cannot create or write to the folder {full}: {ex.Message} (change {key}, or the data folder with --data)", ex);
            }
        }
    }
}
