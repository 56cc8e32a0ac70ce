using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using HumWatch.Simulation;
using Microsoft.Data.Sqlite;

namespace HumWatch.KillHarness;

/// <summary>What one service run under the plan left behind.</summary>
internal sealed record RunOutcome(
    string DataFolder, IReadOnlyList<PublishedAlert> Published, IReadOnlyList<string> DroppedFiles,
    int Kills, int KillsWithFileInInbox, int KillsWithAlertOpen, int ExitCode, TimeSpan Elapsed);

/// <summary>
/// Plays the plan against the real program: streams the rooms over the wire protocol paced to the plan's speed,
/// drops EDF files into the inbox, SIGKILLs and restarts at the plan's points (or never, for the reference run),
/// and stops it in order at the end.
/// </summary>
internal sealed class KillRun
{
    private readonly KillPlan _plan;
    private readonly TextWriter _progress;

    public KillRun(KillPlan plan, TextWriter progress)
    {
        _plan = plan;
        _progress = progress;
    }

    public async Task<RunOutcome> PlayAsync(string dataFolder, bool withKills, CancellationToken cancel)
    {
        Directory.CreateDirectory(dataFolder);
        var inbox = Path.Combine(dataFolder, "inbox");
        Directory.CreateDirectory(inbox);
        var ingestPort = FreePort();
        var publishPort = FreePort();
        var logPath = Path.Combine(dataFolder, "service-output.log");
        var watch = Stopwatch.StartNew();
        var simulators = Enumerable.Range(0, _plan.Rooms.Count).Select(_plan.Simulator).ToList();
        var dropped = new List<string>();
        var kills = 0;
        var killsWithFile = 0;
        var killsWithAlert = 0;
        var fileRandom = new Random(_plan.Options.Seed + 1);

        using var listener = new AlertListener($"tcp://127.0.0.1:{publishPort}");
        var service = await ServiceProcess.StartAsync(dataFolder, ingestPort, publishPort, logPath, cancel);
        try
        {
            using var sender = new ChunkSender(ingestPort);
            var points = withKills ? new Queue<KillPoint>(_plan.Points) : new Queue<KillPoint>();
            var paced = Stopwatch.StartNew();
            var pacedFrom = 0L;
            for (var chunk = 0L; chunk < _plan.TotalChunks; chunk++)
            {
                var wait = ((chunk - pacedFrom) * KillPlan.ChunkSeconds / _plan.Options.Speed) - paced.Elapsed.TotalSeconds;
                if (wait > 0)
                {
                    await Task.Delay(TimeSpan.FromSeconds(wait), cancel);
                }

                for (var r = 0; r < simulators.Count; r++)
                {
                    var samples = (int)Math.Round(KillPlan.ChunkSeconds * KillPlan.SampleRateHz);
                    sender.Send(KillPlan.StreamId(r), simulators[r].Next(samples));
                }

                while (points.Count > 0 && points.Peek().Chunk == chunk)
                {
                    var point = points.Dequeue();
                    if (point.DropFile)
                    {
                        dropped.Add(DropFile(inbox, dropped.Count, fileRandom));
                    }

                    if (!point.Kill)
                    {
                        continue;
                    }

                    if (point.DropFile)
                    {
                        // Mid-file: wait until the inbox has claimed the file in the journal, then kill within 0.2 s.
                        await WaitForClaimAsync(Path.Combine(dataFolder, "humwatch.db"), dropped[^1], cancel);
                        await Task.Delay(point.DelayMs, cancel);
                        killsWithFile += await JournalStateAsync(Path.Combine(dataFolder, "humwatch.db"), dropped[^1]) == "received" ? 1 : 0;
                    }

                    killsWithAlert += listener.OpenCount() > 0 ? 1 : 0;
                    service.Kill();
                    service.Dispose();
                    kills++;

                    // The acquisition side holds its samples while the service is away; stream time stands still.
                    service = await ServiceProcess.StartAsync(dataFolder, ingestPort, publishPort, logPath, cancel);
                    paced.Restart();
                    pacedFrom = chunk + 1;
                    _progress.WriteLine($"  kill {kills}/{_plan.Options.Kills} at stream {chunk * KillPlan.ChunkSeconds:0} s of {_plan.StreamSeconds:0} s ({watch.Elapsed.TotalSeconds:0} s)");
                }
            }

            // Let the last files leave the inbox and the last rows be written, then stop in order.
            var deadline = DateTime.UtcNow.AddSeconds(120);
            while (Directory.EnumerateFiles(inbox, "*", SearchOption.AllDirectories).Any() && DateTime.UtcNow < deadline)
            {
                await Task.Delay(200, cancel);
            }

            await Task.Delay(TimeSpan.FromSeconds(3), cancel);
            var code = await service.StopAsync(TimeSpan.FromSeconds(60));

            // Clears sent during the stop still reach the listener.
            await Task.Delay(TimeSpan.FromSeconds(1), cancel);
            return new RunOutcome(dataFolder, listener.Received, dropped, kills, killsWithFile, killsWithAlert, code, watch.Elapsed);
        }
        finally
        {
            service.Kill();
            service.Dispose();
        }
    }

    /// <summary>
    /// A 5 min recording (long enough that its check takes a good part of a second) of its own room (mains from 5 s on, a seed of its own so every file's content differs),
    /// dropped into the inbox as a careful copier does (<see cref="RecordingFile.Drop"/>).
    /// </summary>
    private string DropFile(string inbox, int index, Random random)
    {
        var name = $"drop-{index + 1:000}.edf";
        var room = new SimulatedRoom
        {
            Name = name,
            SampleRateHz = KillPlan.SampleRateHz,
            Channels = SimulatedRoom.Montage(KillPlan.Channels),
            Tones = [new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = 4 + (8 * random.NextDouble()), OnsetSeconds = 5 }],
        };
        RecordingFile.Drop(new RoomSimulator(room, 1000 + index), inbox, name, seconds: 300, _plan.Options.StartUtc.UtcDateTime.AddMinutes(index));
        return name;
    }

    private static async Task WaitForClaimAsync(string storePath, string name, CancellationToken cancel)
    {
        var deadline = DateTime.UtcNow.AddSeconds(10);
        while (DateTime.UtcNow < deadline && await JournalStateAsync(storePath, name) is null)
        {
            await Task.Delay(5, cancel);
        }
    }

    /// <summary>The file's journal state as the store has it right now (read-only, beside the running service), or null.</summary>
    private static async Task<string?> JournalStateAsync(string storePath, string name)
    {
        try
        {
            await using var connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = storePath, Mode = SqliteOpenMode.ReadOnly, Pooling = false }.ToString());
            await connection.OpenAsync();
            await using var command = new SqliteCommand("SELECT state FROM file_journal WHERE path LIKE '%/' || $name", connection);
            command.Parameters.AddWithValue("$name", name);
            return await command.ExecuteScalarAsync() as string;
        }
        catch (SqliteException)
        {
            return null; // not created yet, or busy
        }
    }

    /// <summary>A free loopback TCP port (taken from the system, then released for the service to bind).</summary>
    internal static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }
}
