using System.Globalization;
using System.Text;
using HumWatch.Core.Analysis;
using HumWatch.Core.Signals;
using HumWatch.Core.Tests.Scenarios;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Core.Tests.Analysis;

/// <summary>Frames kept past the callback (as `check` does to hand them across threads) must not change when the analyser moves on.</summary>
public sealed class AnalysisFrameCopyTests
{
    [Fact]
    public void Clones_and_reused_copies_equal_the_live_frame_and_keep_it_after_the_analyser_moved_on()
    {
        var room = ScenarioRunner.Room(
            250,
            6,
            new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = 6, HarmonicAmplitudes = [0.4, 0.3], OnsetSeconds = 20 },
            new SimulatedTone { Name = "display", FrequencyHz = 75, AmplitudeUvRms = 4, Channels = ["Fp1"], OnsetSeconds = 30 });
        room.Faults = [new SimulatedFault { Kind = SimulatedFaultKind.Flat, Channel = "F3", OnsetSeconds = 40, LevelUv = 0 }];
        var simulator = new RoomSimulator(room, seed: 8);
        var analyzer = new StreamAnalyzer(simulator.Layout, new AnalysisOptions());
        var sink = new CopyingSink();
        var buffer = new float[250 * 6];
        while (simulator.PositionSamples < 250 * 60)
        {
            var first = simulator.PositionSamples;
            simulator.Fill(buffer, 250);
            analyzer.Append(new SampleChunk(simulator.Layout, first, 250, buffer), sink);
        }

        Assert.Equal(sink.Live, sink.ReusedAtTheTime);
        Assert.Equal(sink.Live, sink.Clones.Select(Describe));
        Assert.Contains(sink.Clones, f => f.Lines.Length >= 3 && f.Faults.Length > 0);
    }

    [Fact]
    public void Copying_into_a_frame_of_another_shape_is_refused()
    {
        var frames = new List<AnalysisFrame>();
        foreach (var rate in new[] { 250, 500 })
        {
            var room = ScenarioRunner.Room(rate, 2);
            var simulator = new RoomSimulator(room, seed: 1);
            var analyzer = new StreamAnalyzer(simulator.Layout, new AnalysisOptions());
            var keep = new CopyingSink();
            analyzer.Append(simulator.Next(rate * 10), keep);
            frames.Add(keep.Clones[0]);
        }

        Assert.Equal("target", Assert.Throws<ArgumentException>(() => frames[0].CopyTo(frames[1])).ParamName);
    }

    private static string Describe(AnalysisFrame frame)
    {
        var text = new StringBuilder();
        text.Append(CultureInfo.InvariantCulture, $"{frame.StartSampleIndex} {frame.EndSampleIndex} {frame.StartUtc} {frame.AnalysedChannelCount} {frame.EstimatedMainsHz:R} psd {HashCode.Combine(frame.MeanPsdUv2PerHz.Length, frame.MeanPsdUv2PerHz[10], frame.MeanPsdUv2PerHz[^1])};");
        foreach (var line in frame.Lines)
        {
            text.Append(CultureInfo.InvariantCulture, $" {line.FrequencyHz:R} {line.AmplitudeUvRms:R} {line.MaxAmplitudeUvRms:R} {line.ProminenceDb:R} {line.AffectedChannelCount} {line.ChannelShare:R} {line.EvidenceStartSampleIndex} {line.EvidenceEndSampleIndex} {line.Source} [{string.Join(',', line.WorstChannels.ToArray())}] [{string.Join(',', line.WorstAmplitudesUvRms.ToArray())}] [{string.Join(',', line.AlsoPossible.ToArray())}];");
        }

        foreach (var fault in frame.Faults)
        {
            text.Append(CultureInfo.InvariantCulture, $" {fault};");
        }

        return text.ToString();
    }

    private sealed class CopyingSink : IAnalysisFrameSink
    {
        private AnalysisFrame? _reused;

        public List<string> Live { get; } = [];

        public List<string> ReusedAtTheTime { get; } = [];

        public List<AnalysisFrame> Clones { get; } = [];

        public void OnFrame(AnalysisFrame frame)
        {
            Live.Add(Describe(frame));
            Clones.Add(frame.Clone());

            // One target for the whole stream: it starts with the first frame's (empty) line list and must grow.
            _reused ??= frame.Clone();
            frame.CopyTo(_reused);
            ReusedAtTheTime.Add(Describe(_reused));
        }
    }
}
