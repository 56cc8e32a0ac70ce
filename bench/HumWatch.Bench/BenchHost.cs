namespace HumWatch.Bench;

/// <summary>The settings every section's real host runs with: loopback sockets and page on ephemeral ports, everything it writes under one temp folder, console quiet.</summary>
internal static class BenchHost
{
    public static Dictionary<string, string?> Settings(string folder) => new()
    {
        ["Ingest:Endpoints:0:Address"] = "tcp://127.0.0.1:*",
        ["Publish:Endpoint"] = "tcp://127.0.0.1:*",
        ["Web:Endpoint"] = "http://127.0.0.1:0",
        ["Store:Path"] = Path.Combine(folder, "humwatch.db"),
        ["Logs:Folder"] = Path.Combine(folder, "logs"),
        ["Logs:ConsoleLevel"] = "Fatal",
        ["Inbox:Folder"] = Path.Combine(folder, "inbox"),
        ["Inbox:ArchiveFolder"] = Path.Combine(folder, "archive"),
        ["Inbox:RejectedFolder"] = Path.Combine(folder, "rejected"),
        ["Summaries:Folder"] = Path.Combine(folder, "summaries"),
    };
}
