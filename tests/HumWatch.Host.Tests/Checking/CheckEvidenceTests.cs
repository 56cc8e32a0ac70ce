using HumWatch.Core.Analysis;
using HumWatch.Core.Reporting;
using HumWatch.Formats;
using HumWatch.Host.Checking;
using HumWatch.Host.Tests.Ingest.Support;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Host.Tests.Checking;

/// <summary>
/// `check` reports the grid it attributed against and the evidence behind each line. Simulated recordings whose answer
/// follows from the physics: a grid's fundamental on every channel with harmonics that move with it (it wanders), a
/// display's crystal-steady refresh on a few channels.
/// </summary>
public sealed class CheckEvidenceTests : IDisposable
{
    private readonly TempFolder _temp = new();

    public void Dispose() => _temp.Dispose();

    [Theory]
    [InlineData(50.0)]
    [InlineData(60.0)]
    public void Without_a_configured_grid_the_report_says_the_grid_was_measured_and_names_the_hum_mains(double gridHz)
    {
        var path = Write($"lab-{gridHz:0}.edf", new SimulatedTone { Name = "mains", FrequencyHz = gridHz, AmplitudeUvRms = 6, HarmonicAmplitudes = [0.3, 0.5], WanderHz = 0.05 });

        var report = new RecordingChecker(new AnalysisOptions(), new CheckLimits()).Check(path);

        Assert.Equal(gridHz, report.MainsHz);
        Assert.Equal("measured", report.MainsFrom);
        var fundamental = report.Lines.Single(l => Math.Abs(l.FrequencyHz - gridHz) < 0.3);
        Assert.Equal("mains", fundamental.Source);
        Assert.Equal(1, fundamental.Harmonic);
        Assert.Equal("grid-fundamental", fundamental.Evidence!.Basis);
        var third = report.Lines.Single(l => Math.Abs(l.FrequencyHz - (3 * gridHz)) < 0.5);
        Assert.Equal("mains", third.Source);
        Assert.Equal(3, third.Harmonic);
        Assert.DoesNotContain(report.Notes, n => n.Contains("settings say", StringComparison.Ordinal));
    }

    [Fact]
    public void A_configured_grid_the_data_contradicts_is_kept_and_the_report_says_the_setting_may_be_wrong()
    {
        var path = Write("lab-60-set-50.edf", new SimulatedTone { Name = "mains", FrequencyHz = 60, AmplitudeUvRms = 6, HarmonicAmplitudes = [0.3, 0.5], WanderHz = 0.05 });
        var options = new AnalysisOptions();
        options.Sources.MainsHz = 50;

        var report = new RecordingChecker(options, new CheckLimits()).Check(path);

        Assert.Equal(50, report.MainsHz);
        Assert.Equal("configured", report.MainsFrom);
        Assert.Contains(report.Notes, n => n.Contains("shows a 60 Hz grid", StringComparison.Ordinal) && n.Contains("settings say 50 Hz", StringComparison.Ordinal));
    }

    [Fact]
    public void A_steady_120_Hz_monitor_on_posterior_channels_in_a_60_Hz_lab_is_reported_as_a_display_with_its_evidence()
    {
        var path = Write(
            "lab-60-monitor.edf",
            new SimulatedTone { Name = "mains", FrequencyHz = 60, AmplitudeUvRms = 6, HarmonicAmplitudes = [0, 0.4], WanderHz = 0.05 },
            new SimulatedTone { Name = "monitor", FrequencyHz = 120, AmplitudeUvRms = 3, Channels = ["P3", "Pz", "P4", "O1", "O2"] });

        var report = new RecordingChecker(new AnalysisOptions(), new CheckLimits()).Check(path);

        var line = report.Lines.Single(l => Math.Abs(l.FrequencyHz - 120) < 0.3);
        Assert.Equal("display", line.Source);
        Assert.Equal(120, line.FundamentalHz!.Value, 0);
        Assert.Equal("frequency-track", line.Evidence!.Basis);
        Assert.Equal("independent", line.Evidence.GridLock);
        Assert.Contains("not mains", line.Evidence.Summary, StringComparison.Ordinal);
        Assert.DoesNotContain(line.AlsoPossible, a => a.StartsWith("mains", StringComparison.Ordinal));
        Assert.Contains("display", line.Suggestion, StringComparison.Ordinal);
    }

    [Fact]
    public void The_fundamental_of_every_mains_line_is_the_recordings_measured_grid_not_its_last_frames()
    {
        // fundamentalHz, the fundamental line's frequencyHz and mainsEstimateHz speak of one grid and must agree. The
        // grid runs at 49.97 Hz for 80 s, then at 50.03 Hz for 40 s: most frames (and their median) see 49.97 Hz, the
        // last frame 50.03 Hz. Grandke's interpolation is exact for a steady tone, so each frame's estimate is the
        // tone's frequency to well under 5 mHz at this amplitude.
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

        // A harmonic names the same fundamental: the grid's, not its own frequency over n.
        var third = Assert.Single(report.Lines, l => l.Source == "mains" && l.Harmonic == 3);
        Assert.Equal(report.MainsEstimateHz, third.FundamentalHz);
    }

    private string Write(string name, params SimulatedTone[] tones)
    {
        var room = new SimulatedRoom { Name = "evidence-room", SampleRateHz = 500, Channels = SimulatedRoom.Montage(19), Tones = [.. tones] };
        var path = Path.Combine(_temp.Path, name);
        var simulator = new RoomSimulator(room, seed: 17);
        var options = new EdfWriterOptions { Signals = [.. simulator.Layout.Channels.Select(c => EdfWriterSignal.Edf16(c.Label, 500))] };
        using var writer = new EdfWriter(path, options);
        for (var second = 0; second < 120; second++)
        {
            writer.WriteRecord(simulator.Next(500).SamplesUv.Slice(0, 500 * room.Channels.Count));
        }

        return path;
    }
}
