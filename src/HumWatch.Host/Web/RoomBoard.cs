using System.Text.Json;
using System.Text.Json.Nodes;
using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Host.Publishing;
using HumWatch.Host.Serialization;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Web;

/// <summary>
/// Every room's state, folded from the messages the service publishes (status, alert, clear) as they are handed to the
/// PUB socket, so the page shows what subscribers hear and nothing is computed twice. A room whose data has not moved on
/// for <see cref="WebOptions.SilentAfterSeconds"/> is silent. Changed rooms are collected until the next
/// <see cref="TakeChanges"/>. Rooms other instances of the store watch come from <see cref="SetRemote"/> (the fleet
/// view); a room this instance holds is shown as its own unless it is silent here and its data went on elsewhere.
/// Thread-safe; <see cref="Offer"/> never throws.
/// </summary>
internal sealed class RoomBoard
{
    /// <summary>Rooms silent this long are dropped from the board.</summary>
    public static readonly TimeSpan ForgetAfter = TimeSpan.FromHours(24);

    private readonly TimeProvider _time;
    private readonly TimeSpan _silentAfter;
    private readonly ILogger _logger;
    private readonly Lock _gate = new();
    private readonly SortedDictionary<string, Room> _rooms = new(StringComparer.Ordinal);
    private readonly HashSet<string> _changed = new(StringComparer.Ordinal);
    private readonly Dictionary<string, long> _raisedByKind = new(StringComparer.Ordinal);
    private readonly string? _instance;
    private Dictionary<string, RemoteRoom> _remote = new(StringComparer.Ordinal);

    /// <param name="instance">This instance's name, written as each of its rooms' "instance"; null writes null.</param>
    public RoomBoard(WebOptions options, TimeProvider time, ILogger<RoomBoard> logger, string? instance = null)
    {
        ArgumentNullException.ThrowIfNull(options);
        _time = time;
        _silentAfter = TimeSpan.FromSeconds(options.SilentAfterSeconds);
        _logger = logger;
        _instance = instance;
    }

    /// <summary>The rooms other instances watch, as last read from the store; rooms whose JSON changed count as changed.</summary>
    public void SetRemote(IReadOnlyList<RemoteRoom> rooms)
    {
        ArgumentNullException.ThrowIfNull(rooms);
        var next = new Dictionary<string, RemoteRoom>(rooms.Count, StringComparer.Ordinal);
        foreach (var room in rooms)
        {
            next[room.Stream] = room;
        }

        lock (_gate)
        {
            foreach (var (stream, room) in next)
            {
                if (!_remote.TryGetValue(stream, out var old) || !old.Json.AsSpan().SequenceEqual(room.Json))
                {
                    _changed.Add(stream);
                }
            }

            foreach (var stream in _remote.Keys)
            {
                if (!next.ContainsKey(stream))
                {
                    _changed.Add(stream);
                }
            }

            _remote = next;
        }
    }

    /// <summary>Called with each published message (the SSE clients get their copy elsewhere); never throws.</summary>
    public void Offer(string kind, string streamId, byte[] body)
    {
        try
        {
            switch (kind)
            {
                case Messages.StatusKind:
                    OnStatus(JsonSerializer.Deserialize(body, MessageJsonContext.Output.StatusMessage)!);
                    break;
                case Messages.AlertKind:
                    OnAlert(JsonSerializer.Deserialize(body, MessageJsonContext.Output.AlertMessage)!);
                    break;
                case Messages.ClearKind:
                    OnClear(JsonSerializer.Deserialize(body, MessageJsonContext.Output.ClearMessage)!);
                    break;
                default:
                    break;
            }
        }
        catch (Exception ex) when (ex is JsonException or NullReferenceException or ArgumentException)
        {
            _logger.MessageUnreadable(ex, kind, streamId);
        }
    }

    /// <summary>Rooms known from the store but not heard from since start: silent until their data comes.</summary>
    public void Seed(IEnumerable<(string Stream, DateTimeOffset? LastDataUtc)> rooms)
    {
        ArgumentNullException.ThrowIfNull(rooms);
        lock (_gate)
        {
            foreach (var (stream, lastData) in rooms)
            {
                if (!_rooms.ContainsKey(stream))
                {
                    _rooms[stream] = new Room(stream, _instance) { LastDataUtc = lastData, Silent = true, SeededAt = _time.GetTimestamp() };
                    _changed.Add(stream);
                }
            }
        }
    }

    /// <summary>Marks rooms that fell silent, forgets long-silent ones, and returns the rooms changed since the last call (a removed room as null) — or null when none.</summary>
    public IReadOnlyList<(string Stream, byte[]? Json)>? TakeChanges()
    {
        lock (_gate)
        {
            Sweep();
            if (_changed.Count == 0)
            {
                return null;
            }

            var result = new List<(string, byte[]?)>(_changed.Count);
            foreach (var stream in _changed.Order(StringComparer.Ordinal))
            {
                result.Add((stream, Shown(stream)));
            }

            _changed.Clear();
            return result;
        }
    }

    /// <summary>Every room's JSON, in stream order.</summary>
    public IReadOnlyList<byte[]> Snapshot()
    {
        lock (_gate)
        {
            Sweep();
            var result = new List<byte[]>(_rooms.Count + _remote.Count);
            foreach (var stream in _rooms.Keys.Union(_remote.Keys).Order(StringComparer.Ordinal))
            {
                if (Shown(stream) is { } json)
                {
                    result.Add(json);
                }
            }

            return result;
        }
    }

    /// <summary>One room's JSON, or null when the board does not know it.</summary>
    public byte[]? RoomJson(string stream)
    {
        lock (_gate)
        {
            Sweep();
            return Shown(stream);
        }
    }

    /// <summary>The instance that watches <paramref name="stream"/> when another instance does (its room is shown), else null.</summary>
    public string? RemoteOwner(string stream)
    {
        lock (_gate)
        {
            return _remote.TryGetValue(stream, out var remote) && !IsLocalShown(stream, remote) ? remote.Instance : null;
        }
    }

    // The caller holds _gate.
    private byte[]? Shown(string stream)
    {
        var remote = _remote.GetValueOrDefault(stream);
        if (_rooms.TryGetValue(stream, out var room) && (remote is null || IsLocalShown(stream, remote)))
        {
            return room.Json();
        }

        return remote?.Json;
    }

    // The caller holds _gate. A room this instance hears from is its own; a silent one yields to the instance whose data is newer.
    private bool IsLocalShown(string stream, RemoteRoom remote) =>
        _rooms.TryGetValue(stream, out var room) && (!room.Silent || room.LastDataUtc is { } last && last >= remote.LastSeenUtc);

    /// <summary>Keys of the room's active alerts (empty for an unknown room).</summary>
    public IReadOnlySet<string> ActiveKeys(string stream)
    {
        lock (_gate)
        {
            return _rooms.TryGetValue(stream, out var room) ? new HashSet<string>(room.Active.Keys, StringComparer.Ordinal) : new HashSet<string>();
        }
    }

    public int RoomCount
    {
        get
        {
            lock (_gate)
            {
                return _rooms.Count;
            }
        }
    }

    /// <summary>Alerts raised since start, by kind (mains, display, site-tone, unidentified, fault).</summary>
    public IReadOnlyList<KeyValuePair<string, long>> RaisedByKind()
    {
        lock (_gate)
        {
            return [.. _raisedByKind];
        }
    }

    /// <summary>Alerts active now, by kind.</summary>
    public IReadOnlyDictionary<string, int> ActiveByKind()
    {
        lock (_gate)
        {
            var result = new Dictionary<string, int>(StringComparer.Ordinal);
            foreach (var room in _rooms.Values)
            {
                foreach (var alert in room.Active.Values)
                {
                    result[alert.Kind] = result.GetValueOrDefault(alert.Kind) + 1;
                }
            }

            return result;
        }
    }

    /// <summary>Each room's lag from its latest status, s, where the stream carries times.</summary>
    public IReadOnlyList<(string Stream, double LagSeconds)> Lags()
    {
        lock (_gate)
        {
            var result = new List<(string, double)>();
            foreach (var room in _rooms.Values)
            {
                if (room.Status?.LagSeconds is { } lag && !room.Silent)
                {
                    result.Add((room.Stream, lag));
                }
            }

            return result;
        }
    }

    private void OnStatus(StatusMessage status)
    {
        lock (_gate)
        {
            var room = RoomOf(status.Stream);
            var previous = room.Status;

            // Data moved on when the counts changed; a new monitor of the stream starts them again from zero.
            var moved = previous is null
                ? status.ChunksAccepted > 0 || status.FramesAnalysed > 0
                : status.ChunksAccepted != previous.ChunksAccepted || status.FramesAnalysed != previous.FramesAnalysed;
            room.Status = status;
            room.Analysed |= status.FramesAnalysed > 0;
            if (moved)
            {
                MovedOn(room);
            }

            Changed(room);
        }
    }

    private void OnAlert(AlertMessage alert)
    {
        lock (_gate)
        {
            var room = RoomOf(alert.Stream);
            if (alert.Event == AlertEventKind.Raised.ToText() || !room.Active.TryGetValue(alert.Key, out var raised))
            {
                room.Active[alert.Key] = alert;
                if (alert.Event == AlertEventKind.Raised.ToText())
                {
                    _raisedByKind[alert.Kind] = _raisedByKind.GetValueOrDefault(alert.Kind) + 1;
                }
            }
            else
            {
                // A severity change carries no hint or onset: keep the raise's, take the new level and figures.
                room.Active[alert.Key] = raised with
                {
                    Event = alert.Event,
                    Severity = alert.Severity,
                    PreviousSeverity = alert.PreviousSeverity,
                    FrequencyHz = alert.FrequencyHz,
                    AmplitudeUvRms = alert.AmplitudeUvRms,
                    ChannelShare = alert.ChannelShare,
                    WorstChannels = alert.WorstChannels,
                    StreamSeconds = alert.StreamSeconds,
                    Utc = alert.Utc,
                };
            }

            room.Analysed = true;
            MovedOn(room);
            Changed(room);
        }
    }

    private void OnClear(ClearMessage clear)
    {
        lock (_gate)
        {
            // This instance closing a stopped peer's alerts does not make the peer's room one of its own.
            if (clear.Reason == AlertClearReason.InstanceStopped.ToText() && !_rooms.ContainsKey(clear.Stream))
            {
                return;
            }

            var room = RoomOf(clear.Stream);
            room.Active.Remove(clear.Key);

            // Only a line that faded away says that data was analysed; "stream ended" comes after the data stopped.
            if (clear.Reason == AlertClearReason.Subsided.ToText())
            {
                room.Analysed = true;
                MovedOn(room);
            }

            Changed(room);
        }
    }

    private Room RoomOf(string stream)
    {
        if (!_rooms.TryGetValue(stream, out var room))
        {
            room = new Room(stream, _instance);
            _rooms[stream] = room;
        }

        return room;
    }

    private void MovedOn(Room room)
    {
        room.LastMovedTimestamp = _time.GetTimestamp();
        room.LastDataUtc = _time.GetUtcNow();
    }

    private void Changed(Room room)
    {
        room.Version++;
        _changed.Add(room.Stream);
    }

    // The caller holds _gate.
    private void Sweep()
    {
        List<string>? forget = null;
        foreach (var room in _rooms.Values)
        {
            var since = room.LastMovedTimestamp ?? room.SeededAt;
            var idle = since is { } t ? _time.GetElapsedTime(t) : TimeSpan.MaxValue;
            var silent = room.LastMovedTimestamp is null ? room.Silent || idle >= _silentAfter : idle >= _silentAfter;
            if (silent != room.Silent)
            {
                room.Silent = silent;
                Changed(room);
            }

            if (silent && idle >= ForgetAfter)
            {
                (forget ??= []).Add(room.Stream);
            }
        }

        foreach (var stream in forget ?? [])
        {
            _rooms.Remove(stream);
            _changed.Add(stream);
        }
    }

    /// <summary>One room. Fields are guarded by the board's lock.</summary>
    private sealed class Room(string stream, string? instance)
    {
        private long _jsonVersion = -1;
        private bool _jsonSilent;
        private byte[] _json = [];

        public string Stream { get; } = stream;

        public StatusMessage? Status { get; set; }

        /// <summary>Active alerts by key, each the latest published body (a severity change merged into its raise).</summary>
        public Dictionary<string, AlertMessage> Active { get; } = new(StringComparer.Ordinal);

        public bool Analysed { get; set; }

        public bool Silent { get; set; }

        public long? LastMovedTimestamp { get; set; }

        public long? SeededAt { get; init; }

        public DateTimeOffset? LastDataUtc { get; set; }

        public long Version { get; set; }

        /// <summary>The room as the API and the page see it; rebuilt only when it changed.</summary>
        public byte[] Json()
        {
            if (_jsonVersion == Version && _jsonSilent == Silent)
            {
                return _json;
            }

            var worst = Active.Values.OrderByDescending(SeverityOf).ThenBy(a => a.OnsetUtc ?? a.Utc).FirstOrDefault();
            var state = Silent ? "silent" : Active.Count > 0 ? "affected" : Analysed ? "clean" : "waiting";
            using var buffer = new MemoryStream();
            using (var writer = new Utf8JsonWriter(buffer, OutputText.WriterOptions(indented: false)))
            {
                writer.WriteStartObject();
                writer.WriteString("stream", Stream);
                WriteNullable(writer, "instance", instance);
                writer.WriteString("state", state);
                WriteNullable(writer, "severity", worst?.Severity);
                if (worst is not null)
                {
                    writer.WriteString("sinceUtc", worst.OnsetUtc ?? worst.Utc);
                }
                else
                {
                    writer.WriteNull("sinceUtc");
                }

                if (LastDataUtc is { } last)
                {
                    writer.WriteString("lastDataUtc", last);
                }
                else
                {
                    writer.WriteNull("lastDataUtc");
                }

                writer.WritePropertyName("status");
                if (Status is null)
                {
                    writer.WriteNullValue();
                }
                else
                {
                    JsonSerializer.Serialize(writer, Status, MessageJsonContext.Output.StatusMessage);
                }

                writer.WriteStartArray("alerts");
                foreach (var alert in Active.Values.OrderByDescending(SeverityOf).ThenByDescending(a => a.AmplitudeUvRms ?? 0).ThenBy(a => a.Key, StringComparer.Ordinal))
                {
                    // The published body as it is, plus the short label the day sheets use for its key.
                    var node = JsonSerializer.SerializeToNode(alert, MessageJsonContext.Output.AlertMessage)!.AsObject();
                    node["label"] = FindingKey.Parse(alert.Key).Label;
                    node.WriteTo(writer);
                }

                writer.WriteEndArray();
                writer.WriteEndObject();
            }

            _json = buffer.ToArray();
            _jsonVersion = Version;
            _jsonSilent = Silent;
            return _json;
        }

        private static int SeverityOf(AlertMessage alert) => AlertSeverityText.TryParse(alert.Severity, out var s) ? (int)s : 0;

        private static void WriteNullable(Utf8JsonWriter writer, string name, string? value)
        {
            if (value is null)
            {
                writer.WriteNull(name);
            }
            else
            {
                writer.WriteString(name, value);
            }
        }
    }
}
