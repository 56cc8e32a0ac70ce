using System.Data.Common;
using System.Reflection;
using HumWatch.Core.Alerts;
using HumWatch.Host.Configuration;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Store;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;

namespace HumWatch.Host.Fleet;

/// <summary>
/// This instance's life in the shared store. At start, before anything is analysed, it registers the instance and
/// closes the alerts its own previous run left open ("service restarted") — unless a peer closed them already — and,
/// once per store, those of builds before instance names. Every <see cref="InstanceOptions.HeartbeatSeconds"/> it writes
/// its heartbeat and the streams it saw, and sweeps peers whose heartbeat is older than
/// <see cref="InstanceOptions.StaleAfterSeconds"/>: the one instance whose conditional update claims such a peer closes
/// that peer's open alerts ("instance stopped"). At a clean stop it marks itself stopped.
/// </summary>
internal sealed class InstanceHeartbeat : BackgroundService
{
    private readonly HumWatchStore _store;
    private readonly UnclosedAlertCloser _closer;
    private readonly StreamSightings _sightings;
    private readonly TimeProvider _time;
    private readonly ILogger _logger;
    private readonly string _name;
    private readonly TimeSpan _beat;
    private readonly TimeSpan _staleAfter;
    private readonly double _heartbeatSeconds;
    private readonly double _staleAfterSeconds;
    private bool _registered;

    public InstanceHeartbeat(HumWatchStore store, UnclosedAlertCloser closer, StreamSightings sightings, IOptions<InstanceOptions> options, TimeProvider time, ILogger<InstanceHeartbeat> logger)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(closer);
        ArgumentNullException.ThrowIfNull(sightings);
        ArgumentNullException.ThrowIfNull(options);
        var o = options.Value;
        var errors = o.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentOutOfRangeException(nameof(options), string.Join(" ", errors));
        }

        _store = store;
        _closer = closer;
        _sightings = sightings;
        _time = time;
        _logger = logger;
        _name = o.Name;
        _heartbeatSeconds = o.HeartbeatSeconds;
        _staleAfterSeconds = o.StaleAfterSeconds;
        _beat = TimeSpan.FromSeconds(o.HeartbeatSeconds);
        _staleAfter = TimeSpan.FromSeconds(o.StaleAfterSeconds);
    }

    /// <summary>This instance's name.</summary>
    public string Name => _name;

    /// <summary>The build written into the instances table.</summary>
    internal static string BuildVersion { get; } =
        typeof(InstanceHeartbeat).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion ?? "unknown";

    public override Task StartAsync(CancellationToken cancellationToken)
    {
        // Here, not in ExecuteAsync: the alerts left open must be closed before the stream monitors start.
        Start();
        return base.StartAsync(cancellationToken);
    }

    public override async Task StopAsync(CancellationToken cancellationToken)
    {
        await base.StopAsync(cancellationToken).ConfigureAwait(false);
        Stop();
    }

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        while (!stoppingToken.IsCancellationRequested)
        {
            try
            {
                await Task.Delay(_beat, _time, stoppingToken).ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                return;
            }

            Beat();
        }
    }

    /// <summary>Registers the instance and closes what its previous run (or an older build) left open; the state found, or null when the store failed (tried again at the next beat).</summary>
    internal InstanceStart? Start()
    {
        var now = _time.GetUtcNow();
        InstanceStart start;
        try
        {
            start = _store.Instances.Register(_name, BuildVersion, now);
        }
        catch (Exception ex) when (IsStoreFailure(ex))
        {
            _logger.BeatFailed(ex, _name);
            return null;
        }

        _registered = true;
        _logger.Registered(_name, _store.FullPath, StartText(start), _heartbeatSeconds, _staleAfterSeconds);
        if (start == InstanceStart.Swept)
        {
            // The peer that claimed this instance closed its alerts; closing them here too would send every clear twice.
            _logger.FoundSwept(_name, _store.Instances.Find(_name)?.SweptBy ?? "a peer");
        }
        else
        {
            _closer.Close(storer => storer == _name, AlertClearReason.ServiceRestarted, now);
        }

        try
        {
            if (_store.Instances.ClaimOnce(InstanceTable.OlderBuildAlertsClaim, _name, now))
            {
                var closed = _closer.Close(storer => storer is null, AlertClearReason.ServiceRestarted, now);
                if (closed > 0)
                {
                    _logger.OlderBuildAlertsClosed(closed);
                }
            }
        }
        catch (Exception ex) when (IsStoreFailure(ex))
        {
            _logger.BeatFailed(ex, _name);
        }

        return start;
    }

    /// <summary>One beat: heartbeat, the streams seen since the last beat, then the sweep of stale peers.</summary>
    internal void Beat()
    {
        if (!_registered)
        {
            Start();
            return;
        }

        var now = _time.GetUtcNow();
        var seen = _sightings.Take();
        try
        {
            if (!_store.Instances.Beat(_name, now))
            {
                // A peer took this instance for stopped (the store refused its beats for too long) and closed its alerts.
                _logger.SweptWhileRunning(_name, _store.Instances.Find(_name)?.SweptBy ?? "a peer");
                _store.Instances.Register(_name, BuildVersion, now);
            }

            _store.StreamOwners.Record(_name, seen);
        }
        catch (Exception ex) when (IsStoreFailure(ex))
        {
            _sightings.Restore(seen);
            _logger.BeatFailed(ex, _name);
            return;
        }

        Sweep(now);
    }

    /// <summary>Claims each stale peer in turn and closes the open alerts of those this instance won; returns how many peers it won.</summary>
    internal int Sweep(DateTimeOffset now)
    {
        var won = 0;
        try
        {
            var cutoff = now - _staleAfter;
            foreach (var peer in _store.Instances.Stale(_name, cutoff))
            {
                if (_store.Instances.TryClaim(peer, _name, cutoff, now) is not { } lastHeartbeat)
                {
                    continue; // another instance claimed it first, or it beat again meanwhile
                }

                won++;

                // Not after the peer's last heartbeat: its streams may have moved to a live instance since.
                var closed = _closer.Close(storer => storer == peer, AlertClearReason.InstanceStopped, lastHeartbeat);
                _logger.PeerSwept(peer, lastHeartbeat, closed);
            }
        }
        catch (Exception ex) when (IsStoreFailure(ex))
        {
            _logger.BeatFailed(ex, _name);
        }

        return won;
    }

    /// <summary>The clean stop: what was seen since the last beat, then the stopped mark.</summary>
    internal void Stop()
    {
        if (!_registered)
        {
            return;
        }

        var now = _time.GetUtcNow();
        try
        {
            _store.StreamOwners.Record(_name, _sightings.Take());
            _store.Instances.MarkStopped(_name, now);
            _logger.Stopped(_name);
        }
        catch (Exception ex) when (IsStoreFailure(ex) || ex is ObjectDisposedException)
        {
            _logger.StopFailed(ex, _name);
        }
    }

    private static string StartText(InstanceStart start) => start switch
    {
        InstanceStart.Fresh => "none",
        InstanceStart.Clean => "stopped cleanly",
        InstanceStart.Unclean => "ended without a clean stop",
        _ => "taken as stopped by a peer",
    };

    private static bool IsStoreFailure(Exception ex) => ex is DbException or InvalidOperationException or IOException;
}
