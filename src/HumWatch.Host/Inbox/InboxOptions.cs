namespace HumWatch.Host.Inbox;

/// <summary>The watched folder. Bound from section "Inbox".</summary>
public sealed class InboxOptions
{
    /// <summary>Whether the folder is watched. The default is true.</summary>
    public bool Enabled { get; set; } = true;

    /// <summary>Folder where recordings are dropped: <c>inbox/&lt;stream&gt;/file.edf</c> or <c>inbox/file.edf</c> (stream = file stem). The default is "humwatch-data/inbox".</summary>
    public string Folder { get; set; } = "humwatch-data/inbox";

    /// <summary>Where checked files and their reports go. The default is "humwatch-data/archive".</summary>
    public string ArchiveFolder { get; set; } = "humwatch-data/archive";

    /// <summary>Where unreadable files go, each with a <c>.reason.txt</c>. The default is "humwatch-data/rejected".</summary>
    public string RejectedFolder { get; set; } = "humwatch-data/rejected";

    /// <summary>A file is taken once its size and time stamp have not changed for this long, s. The default is 5 s.</summary>
    public double StableSeconds { get; set; } = 5;

    /// <summary>Full rescan interval, s: file-system events are missed on network shares. The default is 10 s.</summary>
    public double RescanSeconds { get; set; } = 10;

    public IReadOnlyList<string> Validate(string prefix = "Inbox")
    {
        var errors = new List<string>();
        if (Enabled)
        {
            foreach (var (name, value) in new[] { ("Folder", Folder), ("ArchiveFolder", ArchiveFolder), ("RejectedFolder", RejectedFolder) })
            {
                if (string.IsNullOrWhiteSpace(value) || value.IndexOfAny(Path.GetInvalidPathChars()) >= 0)
                {
                    errors.Add($"{prefix}:{name} must be a folder path (got \"{value}\").");
                }
            }

            if (errors.Count == 0 && (SameFolder(Folder, ArchiveFolder) || SameFolder(Folder, RejectedFolder)))
            {
                errors.Add($"{prefix}:ArchiveFolder and {prefix}:RejectedFolder must differ from {prefix}:Folder, or files would be taken again.");
            }
        }

        if (!(StableSeconds >= 0 && StableSeconds <= 3600))
        {
            errors.Add($"{prefix}:StableSeconds must be between 0 and 3600 s (got {StableSeconds}).");
        }

        if (!(RescanSeconds >= 0.1 && RescanSeconds <= 3600))
        {
            errors.Add($"{prefix}:RescanSeconds must be between 0.1 and 3600 s (got {RescanSeconds}).");
        }

        return errors;
    }

    private static bool SameFolder(string a, string b) =>
        string.Equals(Path.GetFullPath(a).TrimEnd(Path.DirectorySeparatorChar), Path.GetFullPath(b).TrimEnd(Path.DirectorySeparatorChar), StringComparison.Ordinal);
}
