using Xunit;
using HumWatch.Simulation;
using Xunit.Abstractions;

namespace HumWatch.Core.Tests.Scenarios;

public sealed class SmokeTests(ITestOutputHelper output)
{
    [Fact]
    public void Mains_scenario_prints()
    {
        var room = ScenarioRunner.Room(500, 8, new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = 3, HarmonicAmplitudes = [0.3, 0.5, 0.1, 0.2], WanderHz = 0.05 });
        var frames = ScenarioRunner.Run(room, 60, 7);
        foreach (var f in frames.Take(5))
        {
            output.WriteLine($"frame {f.StartSampleIndex}-{f.EndSampleIndex} mains {f.EstimatedMainsHz:F3} analysed {f.AnalysedChannelCount}");
            foreach (var l in f.Lines)
            {
                output.WriteLine($"  {l.FrequencyHz:F3} Hz {l.AmplitudeUvRms:F2} uV prom {l.ProminenceDb:F1} share {l.ChannelShare:F2} src {l.Source.Name} h{l.Source.Harmonic} alias {l.Source.Aliased} ev {l.EvidenceStartSampleIndex}-{l.EvidenceEndSampleIndex} alt {l.AlsoPossible.Length}");
            }
        }

        Assert.NotEmpty(frames);
    }
}
