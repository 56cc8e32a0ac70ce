using HumWatch.Core.Analysis;
using HumWatch.Core.Attribution;
using HumWatch.Core.Tests.Scenarios;
using HumWatch.Core.Tracking;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Core.Tests.Tracking;

/// <summary>
/// Seeded simulated rooms through the analysis and the tracker. The expected answers follow from the physics: a mains
/// harmonic is n × the grid's (wandering) fundamental, a display's refresh comes from its own crystal, and a grid's
/// fundamental shows on most channels with its harmonic family.
/// </summary>
public sealed class LineTrackerTests
{
    private static readonly string[] Posterior = ["P3", "Pz", "P4", "O1", "O2"];

    // A grid wanders by a few hundredths of a hertz over minutes (EN 50160 allows ±1 %; continental grids normally stay within ±0.05 Hz, from memory).
    private static SimulatedTone Mains(double hz, params double[] harmonics) =>
        new() { Name = "mains", FrequencyHz = hz, AmplitudeUvRms = 4, HarmonicAmplitudes = [.. harmonics], WanderHz = 0.05 };

    [Fact]
    public void A_60_Hz_lab_without_a_configured_grid_is_measured_as_60_Hz_mains()
    {
        var frames = TrackedRun(ScenarioRunner.Room(500, 16, Mains(60, 0.3, 0.4)), 60, 201, new AnalysisOptions());

        var last = frames[^1];
        Assert.Equal(60, last.GridNominalHz);
        Assert.Equal(GridOrigin.Measured, last.GridFrom);
        var fundamental = Assert.IsType<TrackedLine>(last.Near(60));
        Assert.Equal(SourceKind.Mains, fundamental.Source.Kind);
        Assert.Equal(1, fundamental.Source.Harmonic);
        Assert.Equal(EvidenceBasis.GridFundamental, fundamental.Evidence.Basis);
        var second = Assert.IsType<TrackedLine>(last.Near(120));
        Assert.Equal(SourceKind.Mains, second.Source.Kind);
        Assert.Equal(2, second.Source.Harmonic);
        Assert.InRange(last.EstimatedMainsHz, 59.9, 60.1);

        // Decided early: from the second frame on, nothing calls the hum a 60 Hz display.
        Assert.All(frames.Skip(1), f => Assert.Equal(SourceKind.Mains, f.Near(60)!.Source.Kind));
    }

    [Fact]
    public void A_50_Hz_lab_without_a_configured_grid_is_measured_as_50_Hz_mains()
    {
        var frames = TrackedRun(ScenarioRunner.Room(500, 16, Mains(50, 0.3, 0.5)), 40, 202, new AnalysisOptions());

        var last = frames[^1];
        Assert.Equal(50, last.GridNominalHz);
        Assert.Equal(GridOrigin.Measured, last.GridFrom);
        Assert.Equal(SourceKind.Mains, last.Near(50)!.Source.Kind);
        var third = last.Near(150)!;
        Assert.Equal(SourceKind.Mains, third.Source.Kind);
        Assert.Equal(3, third.Source.Harmonic);
        Assert.True(double.IsNaN(last.GridConflictHz));
    }

    [Fact]
    public void A_configured_grid_that_the_data_contradicts_is_kept_but_flagged()
    {
        var options = new AnalysisOptions();
        options.Sources.MainsHz = 50;

        var frames = TrackedRun(ScenarioRunner.Room(500, 16, Mains(60, 0.3, 0.4)), 40, 203, options);

        var last = frames[^1];
        Assert.Equal(50, last.GridNominalHz);
        Assert.Equal(GridOrigin.Configured, last.GridFrom);
        Assert.Equal(60, last.GridConflictHz);
    }

    [Fact]
    public void A_60_Hz_monitor_in_a_50_Hz_lab_is_a_display_and_raises_no_grid_doubt()
    {
        var options = new AnalysisOptions();
        options.Sources.MainsHz = 50;
        var monitor = new SimulatedTone { Name = "monitor", FrequencyHz = 60, AmplitudeUvRms = 3, Channels = [.. Posterior] };

        var frames = TrackedRun(ScenarioRunner.Room(500, 19, Mains(50, 0.3), monitor), 40, 204, options);

        var last = frames[^1];
        Assert.Equal(SourceKind.Display, last.Near(60)!.Source.Kind);
        Assert.True(double.IsNaN(last.GridConflictHz));
    }

    [Fact]
    public void A_steady_120_Hz_line_on_posterior_channels_in_a_wandering_60_Hz_grid_is_a_display_not_mains_x2()
    {
        var monitor = new SimulatedTone { Name = "monitor", FrequencyHz = 120, AmplitudeUvRms = 3, Channels = [.. Posterior] };

        var frames = TrackedRun(ScenarioRunner.Room(500, 19, Mains(60, 0, 0.3), monitor), 120, 205, new AnalysisOptions());

        var line = frames[^1].Near(120)!;
        Assert.Equal(SourceKind.Display, line.Source.Kind);
        Assert.Equal(120, line.Source.FundamentalHz, 3);
        Assert.Equal(GridLock.Independent, line.Evidence.Lock);
        Assert.Equal(EvidenceBasis.FrequencyTrack, line.Evidence.Basis);
        Assert.InRange(line.Evidence.GridFollowRatio, -0.5, 0.5);
        Assert.DoesNotContain(line.AlsoPossible, m => m.Kind == SourceKind.Mains);
    }

    [Fact]
    public void A_120_Hz_harmonic_that_follows_the_wandering_grid_is_mains_x2_even_with_a_120_Hz_display_in_the_catalogue()
    {
        var frames = TrackedRun(ScenarioRunner.Room(500, 16, Mains(60, 0.6, 0.3)), 120, 206, new AnalysisOptions());

        var line = frames[^1].Near(120)!;
        Assert.Equal(SourceKind.Mains, line.Source.Kind);
        Assert.Equal(2, line.Source.Harmonic);
        Assert.Equal(GridLock.FollowsGrid, line.Evidence.Lock);
        Assert.InRange(line.Evidence.GridFollowRatio, 0.7, 1.3);
        Assert.DoesNotContain(line.AlsoPossible, m => m.Kind == SourceKind.Display);
    }

    [Fact]
    public void At_150_Hz_a_line_locked_to_a_50_Hz_grid_is_mains_x3_and_a_steady_one_is_the_75_Hz_display_x2()
    {
        var display = new SimulatedTone { Name = "monitor", FrequencyHz = 75, AmplitudeUvRms = 2, Channels = [.. Posterior] };
        var lockedFrames = TrackedRun(ScenarioRunner.Room(500, 19, Mains(50, 0, 0.6), display), 120, 207, new AnalysisOptions());
        var locked = lockedFrames[^1].Near(150)!;
        Assert.Equal(SourceKind.Mains, locked.Source.Kind);
        Assert.Equal(3, locked.Source.Harmonic);
        Assert.Equal(GridLock.FollowsGrid, locked.Evidence.Lock);

        var displayWithHarmonic = new SimulatedTone { Name = "monitor", FrequencyHz = 75, AmplitudeUvRms = 2, HarmonicAmplitudes = [1.5], Channels = [.. Posterior] };
        var steadyFrames = TrackedRun(ScenarioRunner.Room(500, 19, Mains(50), displayWithHarmonic), 120, 208, new AnalysisOptions());
        var steady = steadyFrames[^1].Near(150)!;
        Assert.Equal(SourceKind.Display, steady.Source.Kind);
        Assert.Equal(2, steady.Source.Harmonic);
        Assert.Equal(75, steady.Source.FundamentalHz, 3);
    }

    [Fact]
    public void When_the_grid_holds_still_the_evidence_cannot_decide_and_the_alternative_is_kept_with_that_reason()
    {
        // An exactly steady grid: n × f₀ does not move, so the frequency track cannot tell mains ×2 from a 120 Hz display.
        var steadyMains = new SimulatedTone { Name = "mains", FrequencyHz = 60, AmplitudeUvRms = 4, HarmonicAmplitudes = [0.6] };

        var frames = TrackedRun(ScenarioRunner.Room(500, 16, steadyMains), 60, 209, new AnalysisOptions());

        var line = frames[^1].Near(120)!;
        Assert.Equal(GridLock.Unknown, line.Evidence.Lock);
        Assert.Equal(EvidenceBasis.Undecided, line.Evidence.Basis);
        var all = line.AlsoPossible.Append(line.Source).ToArray();
        Assert.Contains(all, m => m.Kind == SourceKind.Mains && m.Harmonic == 2);
        Assert.Contains(all, m => m.Kind == SourceKind.Display && m.Harmonic == 1);
    }

    [Fact]
    public void At_250_Hz_a_plain_50_Hz_line_lists_no_aliased_harmonics_of_itself_nor_displays_whose_fundamental_is_absent()
    {
        var options = new AnalysisOptions();
        options.Sources.MainsHz = 50;

        var frames = TrackedRun(ScenarioRunner.Room(250, 8, Mains(50)), 30, 210, options);

        var line = frames[^1].Near(50)!;
        Assert.Equal(SourceKind.Mains, line.Source.Kind);
        Assert.Equal(1, line.Source.Harmonic);
        Assert.Empty(line.AlsoPossible);
    }

    [Fact]
    public void A_line_counts_as_persistent_from_its_third_frame_in_a_row_and_keeps_its_identity()
    {
        var frames = TrackedRun(ScenarioRunner.Room(500, 8, Mains(50)), 30, 211, new AnalysisOptions());

        var ids = frames.Select(f => f.Near(50)!.TrackId).Distinct().ToArray();
        Assert.Single(ids);
        Assert.False(frames[0].Near(50)!.IsPersistent);
        Assert.False(frames[1].Near(50)!.IsPersistent);
        Assert.All(frames.Skip(2), f => Assert.True(f.Near(50)!.IsPersistent));
    }

    private static List<TrackedFrame> TrackedRun(SimulatedRoom room, double seconds, int seed, AnalysisOptions options)
    {
        var recorder = new TrackedRecorder();
        var tracker = new LineTracker(options, recorder);
        var simulator = new RoomSimulator(room, seed);
        var analyzer = new StreamAnalyzer(simulator.Layout, options);
        var chunk = (int)room.SampleRateHz;
        var total = (long)Math.Round(seconds * room.SampleRateHz);
        var buffer = new float[chunk * simulator.Layout.ChannelCount];
        while (simulator.PositionSamples < total)
        {
            var n = (int)Math.Min(chunk, total - simulator.PositionSamples);
            var first = simulator.PositionSamples;
            simulator.Fill(buffer, n);
            analyzer.Append(new Core.Signals.SampleChunk(simulator.Layout, first, n, buffer), tracker);
        }

        Assert.NotEmpty(recorder.Frames);
        return recorder.Frames;
    }

    private sealed record TrackedLine(double FrequencyHz, double AmplitudeUvRms, SourceMatch Source, SourceMatch[] AlsoPossible, LineEvidence Evidence, int TrackId, bool IsPersistent);

    private sealed record TrackedFrame(double GridNominalHz, GridOrigin GridFrom, double GridConflictHz, double EstimatedMainsHz, TrackedLine[] Lines)
    {
        public TrackedLine? Near(double hz, double toleranceHz = 0.3) =>
            Lines.Where(l => Math.Abs(l.FrequencyHz - hz) <= toleranceHz).OrderByDescending(l => l.AmplitudeUvRms).FirstOrDefault();
    }

    private sealed class TrackedRecorder : IAnalysisFrameSink
    {
        public List<TrackedFrame> Frames { get; } = [];

        public void OnFrame(AnalysisFrame frame)
        {
            var lines = new TrackedLine[frame.Lines.Length];
            for (var i = 0; i < lines.Length; i++)
            {
                var l = frame.Lines[i];
                lines[i] = new TrackedLine(l.FrequencyHz, l.AmplitudeUvRms, l.Source, l.AlsoPossible.ToArray(), l.Evidence, l.TrackId, l.IsPersistent);
            }

            Frames.Add(new TrackedFrame(frame.GridNominalHz, frame.GridFrom, frame.GridConflictHz, frame.EstimatedMainsHz, lines));
        }
    }
}
