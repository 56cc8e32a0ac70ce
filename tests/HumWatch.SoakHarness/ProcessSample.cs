using System.Globalization;

namespace HumWatch.SoakHarness;

/// <summary>What the service process holds at one moment, read from Linux procfs (proc(5)).</summary>
/// <param name="WallSeconds">Wall time since the service started, s.</param>
/// <param name="WorkingSetBytes">Resident set (VmRSS).</param>
/// <param name="Threads">Threads of the process.</param>
/// <param name="Handles">Open file descriptors.</param>
/// <param name="Sockets">Of those, sockets (TCP and the eventfd/pipe pairs ZeroMQ uses are counted apart: only "socket:").</param>
/// <param name="ChunksSent">Chunks the harness had sent, all rooms.</param>
/// <param name="Status">The service's own counters, summed over the streams' latest status messages.</param>
internal sealed record ProcessSample(
    double WallSeconds, long WorkingSetBytes, int Threads, int Handles, int Sockets, long ChunksSent, StatusTotals Status)
{
    public const string CsvHeader = "wall_s,working_set_mib,threads,handles,sockets,chunks_sent,chunks_accepted,chunks_dropped,chunks_rejected,max_lag_s";

    public double WorkingSetMiB => WorkingSetBytes / (1024.0 * 1024.0);

    public static ProcessSample Take(int pid, double wallSeconds, long chunksSent, StatusTotals status)
    {
        var proc = $"/proc/{pid}";
        long rssBytes = 0;
        var threads = 0;
        foreach (var line in File.ReadLines(Path.Combine(proc, "status")))
        {
            if (line.StartsWith("VmRSS:", StringComparison.Ordinal))
            {
                rssBytes = long.Parse(line.AsSpan(6).Trim().TrimEnd("kB").Trim(), CultureInfo.InvariantCulture) * 1024;
            }
            else if (line.StartsWith("Threads:", StringComparison.Ordinal))
            {
                threads = int.Parse(line.AsSpan(8).Trim(), CultureInfo.InvariantCulture);
            }
        }

        var handles = 0;
        var sockets = 0;
        foreach (var fd in Directory.EnumerateFileSystemEntries(Path.Combine(proc, "fd")))
        {
            handles++;
            try
            {
                if (new FileInfo(fd).LinkTarget?.StartsWith("socket:", StringComparison.Ordinal) == true)
                {
                    sockets++;
                }
            }
            catch (IOException)
            {
                // The descriptor closed between listing and reading: counted as a handle of that moment only.
            }
        }

        return new ProcessSample(wallSeconds, rssBytes, threads, handles, sockets, chunksSent, status);
    }

    public string ToCsv() => string.Create(
        CultureInfo.InvariantCulture,
        $"{WallSeconds:0},{WorkingSetMiB:0.0},{Threads},{Handles},{Sockets},{ChunksSent},{Status.ChunksAccepted},{Status.ChunksDropped},{Status.ChunksRejected},{Status.MaxLagSeconds:0.00}");
}
