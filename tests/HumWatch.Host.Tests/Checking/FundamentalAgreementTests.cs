using HumWatch.Core.Analysis;
using HumWatch.Core.Reporting;
using HumWatch.Formats;
using HumWatch.Host.Checking;
using HumWatch.Host.Tests.Ingest.Support;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Host.Tests.Checking;

/// <summary>
/// A mains line's fundamentalHz, the fundamental line's frequencyHz and the report's mainsEstimateHz speak of one
/// grid and must agree. Simulated: the grid runs at 49.97 Hz for the first 80 s and steps to 50.03 Hz for the last 40 s,
/// so most frames (and their median) see 49.97 Hz while the last frame sees 50.03 Hz. Grandke's interpolation is exact
/// for a steady tone, so each frame's estimate is the tone's frequency to well under 5 mHz at this amplitude.
/// </summary>
public sealed class FundamentalAgreementTests : IDisposable
{
    private readonly TempFolder _temp = new();

    public void Dispose() => _temp.Dispose();

    [Fact]
    public void The_fundamental_of_every_mains_line_is_the_recordings_measured_grid_not_its_last_frames()
    {
        var path = Write(
            "stepped-grid.edf",
            new SimulatedTone { Name = "grid before", FrequencyHz = 49.97, AmplitudeUvRms = 6, HarmonicAmplitudes = [0, 0.5], OffsetSeconds = 80 },
            new SimulatedTone { Name = "grid after", FrequencyHz = 50.03, AmplitudeUvRms = 6, HarmonicAmplitudes = [0, 0.5], OnsetSeconds = 80 });

        var report = new RecordingChecker(new AnalysisOptions(), new CheckLimits()).Check(path);

        Assert.Equal(49.97, report.MainsEstimateHz!.Value, 0.005);
        var fundamental = Assert.Single(report.Lines, l => l.Source == "mains" && l.Harmonic == 1);
        Assert.Equal(49.97, fundamental.FrequencyHz, 0.005);
        Assert.Equal(report.MainsEstimateHz, fundamental.FundamentalHz);
        Assert.Equal(report.MainsEstimateHz.Value, fundamental.FrequencyHz, 0.001);

        // A harmonic names the same fundamental: the grid's, not n-th of its own frequency.
        var third = Assert.Single(report.Lines, l => l.Source == "mains" && l.Harmonic == 3);
        Assert.Equal(report.MainsEstimateHz, third.FundamentalHz);
    }

    private string Write(string name, params SimulatedTone[] tones)
    {
        var room = new SimulatedRoom { Name = "grid-room", SampleRateHz = 500, Channels = SimulatedRoom.Montage(19), Tones = [.. tones] };
        var path = Path.Combine(_temp.Path, name);
        var simulator = new RoomSimulator(room, seed: 23);
        var options = new EdfWriterOptions { Signals = [.. simulator.Layout.Channels.Select(c => EdfWriterSignal.Edf16(c.Label, 500))] };
        using var writer = new EdfWriter(path, options);
        for (var second = 0; second < 120; second++)
        {
            writer.WriteRecord(simulator.Next(500).SamplesUv.AsSpan(0, 500 * room.Channels.Count));
        }

        return path;
    }
}
