using HumWatch.Simulation;

namespace HumWatch.KillHarness;

/// <summary>What one harness run does; every random choice follows from <see cref="Seed"/>.</summary>
internal sealed record KillOptions
{
    public int Kills { get; init; } = 50;

    public int Seed { get; init; } = 13;

    public int Rooms { get; init; } = 3;

    /// <summary>Stream time per wall time; the harness paces its chunks to it.</summary>
    public double Speed { get; init; } = 10;

    /// <summary>Mean stream time between kills, s (drawn uniformly in [0.2, 1.8] × this).</summary>
    public double MeanSecondsBetweenKills { get; init; } = 60;

    /// <summary>Where the two runs' data folders go; a fresh temp folder when null.</summary>
    public string? WorkFolder { get; init; }

    /// <summary>Fixed start of every stream, so minutes and alert times repeat from run to run.</summary>
    public DateTimeOffset StartUtc { get; init; } = new(2026, 3, 2, 8, 0, 0, TimeSpan.Zero);
}

/// <summary>What happens at one point of the stream: a file dropped, then (maybe) a SIGKILL after a short wall delay.</summary>
internal sealed record KillPoint(long Chunk, bool DropFile, bool Kill, int DelayMs);

/// <summary>The rooms and the schedule of one run, built from the seed alone.</summary>
internal sealed class KillPlan
{
    /// <summary>Chunk length, s, as the demo sends.</summary>
    public const double ChunkSeconds = 0.25;

    /// <summary>Rate of the simulated rooms, Hz: 500, so mains harmonics up to the 5th are not aliased onto other lines.</summary>
    public const int SampleRateHz = 500;

    public const int Channels = 8;

    private KillPlan(KillOptions options, IReadOnlyList<SimulatedRoom> rooms, IReadOnlyList<KillPoint> points, long totalChunks)
    {
        Options = options;
        Rooms = rooms;
        Points = points;
        TotalChunks = totalChunks;
    }

    public KillOptions Options { get; }

    public IReadOnlyList<SimulatedRoom> Rooms { get; }

    public IReadOnlyList<KillPoint> Points { get; }

    public long TotalChunks { get; }

    public double StreamSeconds => TotalChunks * ChunkSeconds;

    public static KillPlan Create(KillOptions options)
    {
        var random = new Random(options.Seed);
        var points = new List<KillPoint>();
        var chunk = 0L;
        for (var k = 0; k < options.Kills; k++)
        {
            chunk += (long)(options.MeanSecondsBetweenKills * (0.2 + 1.6 * random.NextDouble()) / ChunkSeconds);

            // Half the kills drop a file and come 0-200 ms after the inbox has claimed it, mostly while it is being
            // checked (mid-file). The others come at once, often mid-alert.
            var midFile = random.NextDouble() < 0.5;
            points.Add(new KillPoint(chunk, midFile, Kill: true, midFile ? random.Next(200) : 0));

            // And a file that is left alone between kills.
            if (random.NextDouble() < 0.5)
            {
                points.Add(new KillPoint(chunk + 4, DropFile: true, Kill: false, 0));
            }
        }

        // Room for the last stream to raise, clear and be written after the last kill.
        var total = chunk + (long)(60 / ChunkSeconds);
        var rooms = Enumerable.Range(0, options.Rooms).Select(r => Room(r, total * ChunkSeconds, random)).ToList();
        return new KillPlan(options, rooms, [.. points.OrderBy(p => p.Chunk)], total);
    }

    public RoomSimulator Simulator(int room) => new(Rooms[room], NoiseSeed(room), Options.StartUtc);

    public static string StreamId(int room) => $"room-{room + 1}";

    private int NoiseSeed(int room) => unchecked((Options.Seed * 7919) + room);

    /// <summary>
    /// A room with mains (50 Hz) episodes of 20-60 s every 40-120 s, so alerts rise and clear throughout the run;
    /// every second room also has a 60 Hz display line in other episodes.
    /// </summary>
    private static SimulatedRoom Room(int index, double seconds, Random random)
    {
        var room = new SimulatedRoom
        {
            Name = StreamId(index),
            SampleRateHz = SampleRateHz,
            Channels = SimulatedRoom.Montage(Channels),
        };
        AddEpisodes(room, "mains", 50, 8, seconds, random);
        if (index % 2 == 1)
        {
            AddEpisodes(room, "display", 60, 6, seconds, random);
        }

        return room;
    }

    private static void AddEpisodes(SimulatedRoom room, string name, double frequencyHz, double amplitudeUvRms, double seconds, Random random)
    {
        var t = 10 + (30 * random.NextDouble());
        while (t < seconds - 30)
        {
            var length = 20 + (40 * random.NextDouble());
            room.Tones.Add(new SimulatedTone { Name = name, FrequencyHz = frequencyHz, AmplitudeUvRms = amplitudeUvRms, OnsetSeconds = t, OffsetSeconds = t + length });
            t += length + 20 + (60 * random.NextDouble());
        }
    }
}
