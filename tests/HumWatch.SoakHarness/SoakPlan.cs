using HumWatch.Simulation;

namespace HumWatch.SoakHarness;

/// <summary>What one soak run does; every random choice follows from <see cref="Seed"/>.</summary>
internal sealed record SoakOptions
{
    /// <summary>Wall time of the run, minutes.</summary>
    public double Minutes { get; init; } = 120;

    public int Rooms { get; init; } = 50;

    public int Channels { get; init; } = 32;

    public int SampleRateHz { get; init; } = 500;

    /// <summary>Stream time per wall time; 1 is real time.</summary>
    public double Speed { get; init; } = 1;

    /// <summary>Wall time between samples of the service process, s.</summary>
    public double SampleSeconds { get; init; } = 30;

    /// <summary>Wall time before the working set is expected to be flat, minutes (the 2026-12-03 run rose until about 20 min, then held within 3 MiB).</summary>
    public double WarmUpMinutes { get; init; } = 20;

    public int Seed { get; init; } = 17;

    /// <summary>Where the data folder, the curve (CSV, SVG) and the service output go; a fresh temp folder when null.</summary>
    public string? WorkFolder { get; init; }
}

/// <summary>The simulated rooms of a soak: every one switches lines on and off all through the run.</summary>
internal static class SoakRooms
{
    /// <summary>Chunk length, s, as the demo sends.</summary>
    public const double ChunkSeconds = 0.25;

    public static string StreamId(int room) => $"soak-room-{room + 1:00}";

    /// <summary>
    /// Mains (50 Hz, 8 µV RMS) in episodes of 1-5 min every 3-15 min in every room, and a 75 Hz display line in
    /// every third room, so alerts rise and clear throughout and the alert book, store and ledger are exercised.
    /// </summary>
    public static RoomSimulator Create(SoakOptions options, int index, DateTimeOffset startUtc)
    {
        var random = new Random(unchecked((options.Seed * 7919) + index));
        var streamSeconds = options.Minutes * 60 * options.Speed;
        var room = new SimulatedRoom
        {
            Name = StreamId(index),
            SampleRateHz = options.SampleRateHz,
            Channels = SimulatedRoom.Montage(options.Channels),
        };
        AddEpisodes(room, "mains", 50, 8, streamSeconds, random);
        if (index % 3 == 2)
        {
            AddEpisodes(room, "display", 75, 6, streamSeconds, random);
        }

        return new RoomSimulator(room, random.Next(), startUtc);
    }

    private static void AddEpisodes(SimulatedRoom room, string name, double frequencyHz, double amplitudeUvRms, double seconds, Random random)
    {
        var t = 30 + (120 * random.NextDouble());
        while (t < seconds)
        {
            var length = 60 + (240 * random.NextDouble());
            room.Tones.Add(new SimulatedTone { Name = name, FrequencyHz = frequencyHz, AmplitudeUvRms = amplitudeUvRms, OnsetSeconds = t, OffsetSeconds = t + length });
            t += length + 180 + (720 * random.NextDouble());
        }
    }
}
