using HumWatch.Core.Analysis;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Simulation;

namespace HumWatch.Core.Tests.Scenarios;

/// <summary>A line copied out of a pooled frame.</summary>
public sealed record LineSnapshot(
    double FrequencyHz,
    double AmplitudeUvRms,
    double MaxAmplitudeUvRms,
    double ProminenceDb,
    int AffectedChannelCount,
    double ChannelShare,
    int[] WorstChannels,
    long EvidenceStartSampleIndex,
    long EvidenceEndSampleIndex,
    SourceMatch Source,
    SourceMatch[] AlsoPossible);

/// <summary>A frame copied out of the analyser's reused object.</summary>
public sealed record FrameSnapshot(long StartSampleIndex, long EndSampleIndex, DateTimeOffset? StartUtc, int AnalysedChannelCount, double EstimatedMainsHz, LineSnapshot[] Lines, ChannelFault[] Faults)
{
    public LineSnapshot? Near(double frequencyHz, double toleranceHz = 0.3) =>
        Lines.Where(l => Math.Abs(l.FrequencyHz - frequencyHz) <= toleranceHz).OrderByDescending(l => l.AmplitudeUvRms).FirstOrDefault();
}

/// <summary>Keeps a copy of every frame.</summary>
public sealed class FrameRecorder : IAnalysisFrameSink
{
    public List<FrameSnapshot> Frames { get; } = [];

    public void OnFrame(AnalysisFrame frame)
    {
        var lines = new LineSnapshot[frame.Lines.Length];
        for (var i = 0; i < lines.Length; i++)
        {
            var l = frame.Lines[i];
            lines[i] = new LineSnapshot(l.FrequencyHz, l.AmplitudeUvRms, l.MaxAmplitudeUvRms, l.ProminenceDb, l.AffectedChannelCount, l.ChannelShare, l.WorstChannels.ToArray(), l.EvidenceStartSampleIndex, l.EvidenceEndSampleIndex, l.Source, l.AlsoPossible.ToArray());
        }

        Frames.Add(new FrameSnapshot(frame.StartSampleIndex, frame.EndSampleIndex, frame.StartUtc, frame.AnalysedChannelCount, frame.EstimatedMainsHz, lines, frame.Faults.ToArray()));
    }
}

/// <summary>Builds rooms and runs them through a <see cref="StreamAnalyzer"/>.</summary>
public static class ScenarioRunner
{
    /// <summary>A room with a quiet-ish default background and <paramref name="channels"/> channels.</summary>
    public static SimulatedRoom Room(double sampleRateHz, int channels, params SimulatedTone[] tones) => new()
    {
        Name = "test-room",
        SampleRateHz = sampleRateHz,
        Channels = SimulatedRoom.Montage(channels),
        Tones = [.. tones],
    };

    /// <summary>Simulates <paramref name="seconds"/> of the room and returns every frame.</summary>
    public static List<FrameSnapshot> Run(SimulatedRoom room, double seconds, int seed, AnalysisOptions? options = null, double chunkSeconds = 1)
    {
        var simulator = new RoomSimulator(room, seed);
        var analyzer = new StreamAnalyzer(simulator.Layout, options ?? new AnalysisOptions());
        var recorder = new FrameRecorder();
        var chunk = (int)Math.Round(chunkSeconds * room.SampleRateHz);
        var total = (long)Math.Round(seconds * room.SampleRateHz);
        var buffer = new float[chunk * simulator.Layout.ChannelCount];
        while (simulator.PositionSamples < total)
        {
            var n = (int)Math.Min(chunk, total - simulator.PositionSamples);
            var first = simulator.PositionSamples;
            simulator.Fill(buffer, n);
            analyzer.Append(new Core.Signals.SampleChunk(simulator.Layout, first, n, buffer), recorder);
        }

        return recorder.Frames;
    }
}
