using HumWatch.Core.Signals;
using HumWatch.Simulation;

namespace HumWatch.Bench;

/// <summary>Invented rooms for the benchmarks: EEG-like background plus mains (with harmonics) and a 75 Hz display.</summary>
internal static class SimulatedStreams
{
    /// <summary>Start time stamped on simulated chunks (an invented date).</summary>
    public static readonly DateTimeOffset StartUtc = new(2026, 3, 2, 9, 0, 0, TimeSpan.Zero);

    /// <summary>
    /// A room of <paramref name="channels"/> channels at <paramref name="sampleRateHz"/>: 50 Hz mains at 4 µV RMS with
    /// harmonics on every channel, and a 75 Hz display at 2 µV RMS on the first quarter of the channels.
    /// </summary>
    public static SimulatedRoom ContaminatedRoom(string name, int channels, double sampleRateHz)
    {
        var montage = SimulatedRoom.Montage(channels);
        var display = new List<string>();
        for (var c = 0; c < Math.Max(1, channels / 4); c++)
        {
            display.Add(montage[c].Label);
        }

        return new SimulatedRoom
        {
            Name = name,
            SampleRateHz = sampleRateHz,
            Channels = montage,
            Tones =
            [
                new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = 4, HarmonicAmplitudes = [0.3, 0.5], WanderHz = 0.03 },
                new SimulatedTone { Name = "monitor", FrequencyHz = 75, AmplitudeUvRms = 2, Channels = display },
            ],
        };
    }

    /// <summary>A room with background only, or with a 50 Hz line at 6 µV RMS on all channels from <paramref name="lineOnsetSeconds"/>.</summary>
    public static SimulatedRoom QuietRoom(string name, int channels, double sampleRateHz, double? lineOnsetSeconds = null) => new()
    {
        Name = name,
        SampleRateHz = sampleRateHz,
        Channels = SimulatedRoom.Montage(channels),
        Tones = lineOnsetSeconds is { } onset
            ? [new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = 6, OnsetSeconds = onset }]
            : [],
    };

    /// <summary>
    /// Pre-generates <paramref name="uniqueSeconds"/> of <paramref name="room"/> in chunks of <paramref name="chunkSamples"/>,
    /// then returns <paramref name="totalChunks"/> chunk objects that replay those buffers with advancing sample index
    /// and time (so a long run costs no generation and no allocation).
    /// </summary>
    public static SampleChunk[] Pregenerate(SimulatedRoom room, int seed, int chunkSamples, int uniqueChunks, int totalChunks)
    {
        var simulator = new RoomSimulator(room, seed);
        var buffers = new float[uniqueChunks][];
        for (var i = 0; i < uniqueChunks; i++)
        {
            buffers[i] = new float[chunkSamples * simulator.Layout.ChannelCount];
            simulator.Fill(buffers[i], chunkSamples);
        }

        var chunks = new SampleChunk[totalChunks];
        for (var i = 0; i < totalChunks; i++)
        {
            var first = (long)i * chunkSamples;
            chunks[i] = new SampleChunk(simulator.Layout, first, chunkSamples, buffers[i % uniqueChunks], StartUtc.AddTicks((long)Math.Round(first / room.SampleRateHz * TimeSpan.TicksPerSecond)));
        }

        return chunks;
    }
}
