using HumWatch.Formats;

namespace HumWatch.Cli.Dataset;

/// <summary>
/// One file a dataset check will read: its full path, the path its report gives (as reachable from the working
/// folder), the path its table row gives (relative to a lone folder argument) and its size.
/// </summary>
internal sealed record DatasetFile(string FullPath, string ReportPath, string TablePath, long SizeBytes);

/// <summary>A file or folder the walk did not take, and why.</summary>
internal sealed record PassedOver(string Path, string Reason)
{
    public const string NotARecording = "not a recording";
}

/// <summary>The files to check and what the walk passed over.</summary>
internal sealed record DatasetWalkResult(IReadOnlyList<DatasetFile> Files, IReadOnlyList<PassedOver> PassedOver);

/// <summary>
/// Turns `check` arguments (files and folders) into the list of files to check. Folders are walked recursively in
/// ordinal name order, so the table's rows come out the same on every machine. A link is followed only to a file
/// inside the folder given (never to a folder, so no walk loops and none leaves the tree); folders whose name starts
/// with '.' (version-control and annex stores) are not entered. A file named on the command line is always checked,
/// so a wrong name gets its error row, and as often as it is named.
/// </summary>
internal static class DatasetWalk
{
    public static DatasetWalkResult Collect(IReadOnlyList<string> arguments)
    {
        var files = new List<DatasetFile>();
        var passedOver = new List<PassedOver>();
        var seen = new HashSet<string>(StringComparer.Ordinal);

        // One folder alone: rows name files relative to it. Otherwise rows keep the path as it was given, so two
        // folders holding the same relative names stay apart.
        var relativeToRoot = arguments.Count == 1 && Directory.Exists(arguments[0]);
        foreach (var argument in arguments)
        {
            if (!Directory.Exists(argument))
            {
                var full = Path.GetFullPath(argument);
                seen.Add(full);
                files.Add(new DatasetFile(full, argument, argument, SizeOf(full)));

                continue;
            }

            var root = Path.GetFullPath(argument);
            Walk(root, root, argument, relativeToRoot, files, passedOver, seen);
        }

        return new DatasetWalkResult(files, passedOver);
    }

    private static void Walk(string root, string folder, string argument, bool relativeToRoot, List<DatasetFile> files, List<PassedOver> passedOver, HashSet<string> seen)
    {
        IEnumerable<FileSystemInfo> entries;
        try
        {
            entries = [.. new DirectoryInfo(folder).EnumerateFileSystemInfos().OrderBy(e => e.Name, StringComparer.Ordinal)];
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            passedOver.Add(new(Path.Join(argument, Path.GetRelativePath(root, folder)), $"folder not readable ({ex.Message})"));
            return;
        }

        foreach (var entry in entries)
        {
            var relative = Path.GetRelativePath(root, entry.FullName);
            var shown = new Shown(Path.Join(argument, relative), relativeToRoot ? relative : Path.Join(argument, relative));
            if (entry.LinkTarget is not null)
            {
                TakeLink(root, entry, shown, files, passedOver, seen);
            }
            else if (entry is DirectoryInfo directory)
            {
                if (!directory.Name.StartsWith('.'))
                {
                    Walk(root, directory.FullName, argument, relativeToRoot, files, passedOver, seen);
                }
            }
            else
            {
                TakeFile(entry.FullName, shown, files, passedOver, seen);
            }
        }
    }

    private static void TakeLink(string root, FileSystemInfo link, Shown shown, List<DatasetFile> files, List<PassedOver> passedOver, HashSet<string> seen)
    {
        FileSystemInfo? target;
        try
        {
            target = link.ResolveLinkTarget(returnFinalTarget: true);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            passedOver.Add(new(shown.Report, $"link not followed ({ex.Message})"));
            return;
        }

        if (target is null || !target.Exists)
        {
            passedOver.Add(new(shown.Report, "link to a missing target"));
        }
        else if (target is DirectoryInfo)
        {
            passedOver.Add(new(shown.Report, "link to a folder, not followed"));
        }
        else if (!IsInside(root, target.FullName))
        {
            passedOver.Add(new(shown.Report, $"link out of the tree (to {target.FullName}), not followed"));
        }
        else
        {
            TakeFile(target.FullName, shown, files, passedOver, seen);
        }
    }

    /// <param name="realPath">The file itself, a link's target resolved.</param>
    private static void TakeFile(string realPath, Shown shown, List<DatasetFile> files, List<PassedOver> passedOver, HashSet<string> seen)
    {
        bool recording;
        try
        {
            recording = RecordingSniffer.LooksLikeRecording(realPath);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            recording = true; // unreadable: checked all the same, so its row says why
        }

        // A file reached twice (itself and a link to it) is checked once.
        if (recording && seen.Add(realPath))
        {
            files.Add(new DatasetFile(realPath, shown.Report, shown.Table, SizeOf(realPath)));
        }
        else if (!recording)
        {
            passedOver.Add(new(shown.Report, PassedOver.NotARecording));
        }
    }

    private static bool IsInside(string root, string path)
    {
        var relative = Path.GetRelativePath(root, path);
        return relative != ".." && !relative.StartsWith(".." + Path.DirectorySeparatorChar, StringComparison.Ordinal) && !Path.IsPathRooted(relative);
    }

    private static long SizeOf(string path)
    {
        try
        {
            return new FileInfo(path).Length;
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            return 0; // missing or unreadable: its row says why
        }
    }

    /// <summary>A walked entry's path as its report gives it and as its table row gives it.</summary>
    private readonly record struct Shown(string Report, string Table);
}
