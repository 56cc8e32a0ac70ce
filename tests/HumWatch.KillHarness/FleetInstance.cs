using System.Globalization;

namespace HumWatch.KillHarness;

/// <summary>
/// One instance of a fleet on a shared PostgreSQL store: its name, data folder (inbox, archive, summaries, logs), its
/// own ingest and publish ports, and a subscriber on the publish port that stays across its restarts. Starts, kills
/// and stops the real `humwatch run` (<see cref="ServiceProcess"/>) with the fleet's settings.
/// </summary>
internal sealed class FleetInstance : IDisposable
{
    private readonly IReadOnlyList<string> _settings;
    private ServiceProcess? _process;

    public FleetInstance(string name, string work, string connectionStringFile, IReadOnlyList<string> fleetSettings)
    {
        Name = name;
        Folder = Path.Combine(work, name);
        Directory.CreateDirectory(Inbox);
        IngestPort = KillRun.FreePort();
        PublishPort = KillRun.FreePort();
        _settings =
        [
            "Store:Provider=Postgres",
            $"Store:ConnectionStringFile={connectionStringFile}",
            $"Instance:Name={name}",
            .. fleetSettings,
        ];
        Listener = new AlertListener($"tcp://127.0.0.1:{PublishPort.ToString(CultureInfo.InvariantCulture)}", "summary/");
    }

    public string Name { get; }

    public string Folder { get; }

    public string Inbox => Path.Combine(Folder, "inbox");

    public string Archive => Path.Combine(Folder, "archive");

    public string Summaries => Path.Combine(Folder, "summaries");

    /// <summary>The process's console output, every start appended.</summary>
    public string OutputLog => Path.Combine(Folder, "service-output.log");

    /// <summary>The console output of the `summary` command run with this instance's settings.</summary>
    public string SummaryLog => Path.Combine(Folder, "summary-output.log");

    public int IngestPort { get; }

    public int PublishPort { get; }

    public AlertListener Listener { get; }

    /// <summary>The settings `humwatch run` gets beyond the harness's own, for other commands on the same store.</summary>
    public IReadOnlyList<string> Settings => _settings;

    /// <summary>Where to look when something failed: the console output and the log folder.</summary>
    public string Logs => $"{Name}: {OutputLog}, {SummaryLog} and {Path.Combine(Folder, "logs")}";

    public async Task StartAsync(CancellationToken cancel)
    {
        _process?.Dispose();
        _process = await ServiceProcess.StartAsync(Folder, IngestPort, PublishPort, OutputLog, cancel, _settings);
    }

    /// <summary>SIGKILL.</summary>
    public void Kill() => _process?.Kill();

    /// <summary>SIGTERM and the wait for the orderly stop; the exit code.</summary>
    public Task<int> StopAsync() => _process?.StopAsync(TimeSpan.FromSeconds(60)) ?? Task.FromResult(0);

    /// <summary>`humwatch summary --day D --out DIR` with this instance's settings (its own process); the exit code.</summary>
    public Task<int> RenderSummaryAsync(DateOnly day, string outFolder)
    {
        var arguments = new List<string> { "summary", "--data", Folder, "--day", day.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture), "--out", outFolder, "--set", ServiceProcess.MainsSetting };
        foreach (var setting in _settings)
        {
            arguments.Add("--set");
            arguments.Add(setting);
        }

        return ServiceProcess.RunToEndAsync(Folder, arguments, SummaryLog, TimeSpan.FromSeconds(120));
    }

    public void Dispose()
    {
        _process?.Kill();
        _process?.Dispose();
        Listener.Dispose();
    }
}
