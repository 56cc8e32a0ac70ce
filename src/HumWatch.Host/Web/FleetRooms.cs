using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Host.Configuration;
using HumWatch.Host.Fleet;
using HumWatch.Host.Serialization;
using HumWatch.Host.Store;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Web;

/// <summary>A room another instance watches, as the store tells it: its owner, when the owner last saw it, its open alerts.</summary>
/// <param name="Json">The room in the API's shape (status null: only the owner hears its status messages).</param>
internal sealed record RemoteRoom(string Stream, string Instance, DateTimeOffset LastSeenUtc, byte[] Json);

/// <summary>One instance as GET /api/v1/instances gives it.</summary>
/// <param name="State">running, stale (its heartbeat is older than Instance:StaleAfterSeconds and no peer has swept it yet) or stopped.</param>
/// <param name="Rooms">Streams this instance was the last to watch in the last day, by name.</param>
internal sealed record InstanceView(
    string Name, string State, DateTimeOffset StartedUtc, DateTimeOffset HeartbeatUtc, DateTimeOffset? StoppedUtc, string? StopReason,
    string? SweptBy, string BuildVersion, IReadOnlyList<string> Rooms);

/// <summary>GET /api/v1/instances.</summary>
internal sealed record InstancesView(string Instance, DateTimeOffset Utc, IReadOnlyList<InstanceView> Instances);

/// <summary>
/// The rest of the fleet, read from the shared store on a timer (every Instance:HeartbeatSeconds, never per request):
/// the instances, who watched each room last in the last day, and the open alerts of rooms other instances watch.
/// Thread-safe; a refresh that fails keeps the last view.
/// </summary>
internal sealed class FleetRooms(HumWatchStore store, InstanceOptions instance, WebOptions web, TimeProvider time, ILogger<FleetRooms> logger)
{
    private volatile View _view = new([], [], new Dictionary<string, string>(StringComparer.Ordinal), time.GetUtcNow());

    /// <summary>This instance's name.</summary>
    public string Self => instance.Name;

    /// <summary>Rooms other instances watched last, by stream.</summary>
    public IReadOnlyList<RemoteRoom> Remote => _view.Rooms;

    /// <summary>The instance that watched <paramref name="stream"/> last in the last day, or null when none is recorded.</summary>
    public string? OwnerOf(string stream) => _view.Owners.GetValueOrDefault(stream);

    /// <summary>Every instance of the store, by name, as of the last refresh.</summary>
    public InstancesView Instances() => new(Self, _view.Utc, _view.Instances);

    /// <summary>Reads the fleet from the store; false when the store could not be read (the last view stays).</summary>
    public bool Refresh()
    {
        try
        {
            var now = time.GetUtcNow();
            var owners = store.StreamOwners.Latest(now - RoomBoard.ForgetAfter);
            var instances = store.Instances.All();
            var stopped = instances.Where(i => i.StoppedUtc is not null).Select(i => i.Name).ToHashSet(StringComparer.Ordinal);
            var rooms = new List<RemoteRoom>();
            foreach (var owner in owners)
            {
                if (owner.Instance == Self)
                {
                    continue;
                }

                var open = store.Alerts.Unclosed(owner.Stream, storer => storer == owner.Instance);
                rooms.Add(new RemoteRoom(owner.Stream, owner.Instance, owner.LastSeenUtc, RoomJson(owner, open, stopped.Contains(owner.Instance), now)));
            }

            var byOwner = owners.ToDictionary(o => o.Stream, o => o.Instance, StringComparer.Ordinal);
            var views = instances.Select(i => new InstanceView(
                i.Name, StateOf(i, now), i.StartedUtc, i.HeartbeatUtc, i.StoppedUtc, i.StopReason, i.SweptBy, i.BuildVersion,
                [.. owners.Where(o => o.Instance == i.Name).Select(o => o.Stream)])).ToList();
            _view = new View(rooms, views, byOwner, now);
            return true;
        }
        catch (Exception ex) when (ex is System.Data.Common.DbException or InvalidOperationException or IOException)
        {
            logger.FleetReadFailed(ex);
            return false;
        }
    }

    private string StateOf(StoredInstance i, DateTimeOffset now) =>
        i.StoppedUtc is not null ? "stopped" : now - i.HeartbeatUtc > TimeSpan.FromSeconds(instance.StaleAfterSeconds) ? "stale" : "running";

    /// <summary>The room in the shape of <see cref="RoomBoard"/>'s rooms; silent once its owner has not seen it for Web:SilentAfterSeconds or stopped.</summary>
    private byte[] RoomJson(StreamOwner owner, IReadOnlyList<IReadOnlyList<StoredAlert>> open, bool ownerStopped, DateTimeOffset now)
    {
        var alerts = open.Select(AlertOf)
            .OrderByDescending(a => AlertSeverityText.TryParse(a.Severity, out var s) ? (int)s : 0)
            .ThenByDescending(a => a.AmplitudeUvRms ?? 0)
            .ThenBy(a => a.Key, StringComparer.Ordinal)
            .ToList();
        var silent = ownerStopped || now - owner.LastSeenUtc >= TimeSpan.FromSeconds(web.SilentAfterSeconds);
        var worst = alerts.FirstOrDefault();
        using var buffer = new MemoryStream();
        using (var writer = new Utf8JsonWriter(buffer, OutputText.WriterOptions(indented: false)))
        {
            writer.WriteStartObject();
            writer.WriteString("stream", owner.Stream);
            writer.WriteString("instance", owner.Instance);
            writer.WriteString("state", silent ? "silent" : alerts.Count > 0 ? "affected" : "clean");
            if (worst is null)
            {
                writer.WriteNull("severity");
                writer.WriteNull("sinceUtc");
            }
            else
            {
                writer.WriteString("severity", worst.Severity);
                writer.WriteString("sinceUtc", worst.OnsetUtc ?? worst.Utc);
            }

            writer.WriteString("lastDataUtc", owner.LastSeenUtc);
            writer.WriteNull("status");
            writer.WritePropertyName("alerts");
            JsonSerializer.Serialize(writer, alerts, WebJsonContext.Output.ListAlertView);
            writer.WriteEndObject();
        }

        return buffer.ToArray();
    }

    /// <summary>An open alert as stored: its raise (hint, onset) with the level and figures of its latest event, as the board merges a severity change.</summary>
    private static AlertView AlertOf(IReadOnlyList<StoredAlert> events)
    {
        var raised = events.FirstOrDefault(e => e.Event == AlertEventKind.Raised) ?? events[0];
        var latest = AlertView.From(events[^1]);
        return AlertView.From(raised) with
        {
            Severity = latest.Severity,
            FrequencyHz = latest.FrequencyHz,
            AmplitudeUvRms = latest.AmplitudeUvRms,
            ChannelShare = latest.ChannelShare,
            WorstChannels = latest.WorstChannels,
            StreamSeconds = latest.StreamSeconds,
            Utc = latest.Utc,
        };
    }

    private sealed record View(IReadOnlyList<RemoteRoom> Rooms, IReadOnlyList<InstanceView> Instances, IReadOnlyDictionary<string, string> Owners, DateTimeOffset Utc);
}
