using HumWatch.Core.Analysis;
using HumWatch.Core.Ledger;
using HumWatch.Core.Signals;
using HumWatch.Simulation;
using Xunit;
using Xunit.Abstractions;

namespace HumWatch.Core.Tests.Scenarios;

/// <summary>
/// Frequency of a steady mains line through the whole analysis. The simulator's tone has an exactly known, constant
/// frequency, so the reported frequency should equal it up to the estimator's scatter in the background noise.
/// </summary>
public sealed class FrequencyAccuracyTests(ITestOutputHelper output)
{
    /// <summary>
    /// 20 recordings (500 Hz, 8 channels, default EEG-like background, 60 s) each with a steady 5 µV line drawn uniformly
    /// in 49.9 … 50.1 Hz (seed 4950); per recording the absolute error of the median over its frames' line frequencies,
    /// as a check report gives it.
    /// </summary>
    internal static List<(double FrequencyHz, double ErrorHz, int Frames, int Seen)> MainsTrials()
    {
        var random = new Random(4950);
        var trials = new List<(double, double, int, int)>();
        for (var r = 0; r < 20; r++)
        {
            var frequency = 49.9 + (0.2 * random.NextDouble());
            var room = ScenarioRunner.Room(500, 8, new SimulatedTone { FrequencyHz = frequency, AmplitudeUvRms = 5 });
            var frames = ScenarioRunner.Run(room, 60, 7000 + r, chunkSeconds: 10);
            var seen = frames.Select(f => f.Near(frequency)).OfType<LineSnapshot>().Select(l => l.FrequencyHz).ToList();
            trials.Add((frequency, Math.Abs(Median(seen) - frequency), frames.Count, seen.Count));
        }

        return trials;
    }

    [Fact]
    public void A_5_uV_line_over_60_s_is_reported_within_1_mHz_median_error()
    {
        // Measured (this seed): median 0.67 mHz, max 1.70 mHz with Grandke's two-point Hann interpolation; the
        // log-parabola before it gave median 3.22 mHz, max 5.46 mHz (its Hann bias is up to 0.016 bins = 4 mHz at
        // 0.25 Hz bins). The ≤ 1 mHz target is the project's own, for the ledger's per-minute grid-frequency track.
        var trials = MainsTrials();
        foreach (var (frequency, error, frames, seen) in trials)
        {
            output.WriteLine($"{frequency:F4} Hz: {seen}/{frames} frames, error {1000 * error:F3} mHz");
            Assert.Equal(frames, seen); // a 5 µV line at 50 Hz is far above the detection limit (≈ 2 µV)
        }

        var errors = trials.Select(t => t.ErrorHz).ToList();
        var median = Median(errors);
        output.WriteLine($"median {1000 * median:F3} mHz, max {1000 * errors.Max():F3} mHz");
        Assert.True(median <= 1e-3, $"median error {1000 * median:F3} mHz");
    }

    [Fact]
    public void The_ledger_minute_mains_track_follows_a_steady_grid_within_1_mHz()
    {
        // 49.9216 Hz sits 0.31 bins off the 0.25 Hz grid, where the log-parabola's bias was near its largest (5.5 mHz
        // in the trials above). The ledger's per-minute mains value is the median of its frames' estimates from the
        // fundamental, so it inherits the line estimator. Three whole minutes of a 16-channel room.
        const double gridHz = 49.9216;
        var room = ScenarioRunner.Room(500, 16, new SimulatedTone { FrequencyHz = gridHz, AmplitudeUvRms = 5 });
        var simulator = new RoomSimulator(room, 50160);
        var analyzer = new StreamAnalyzer(simulator.Layout, new AnalysisOptions());
        var ledger = new MinuteLedger("room-a", "session-1");
        var rows = new Rows();
        var sink = new LedgerFeed(ledger, rows);
        var start = new DateTimeOffset(2026, 5, 4, 9, 0, 0, TimeSpan.Zero);
        var chunk = 500;
        var buffer = new float[chunk * simulator.Layout.ChannelCount];
        while (simulator.PositionSamples < 180 * 500)
        {
            var first = simulator.PositionSamples;
            simulator.Fill(buffer, chunk);
            analyzer.Append(new SampleChunk(simulator.Layout, first, chunk, buffer, first == 0 ? start : null), sink);
        }

        ledger.Flush(rows);
        var minutes = rows.All.Where(r => r.SourceKey == MinuteLedger.AllSourcesKey).ToList();
        Assert.Equal(3, minutes.Count);
        foreach (var minute in minutes)
        {
            output.WriteLine($"{minute.MinuteUtc:HH:mm}: {minute.MainsHz:F5} Hz ({1000 * (minute.MainsHz - gridHz):+0.000;-0.000} mHz)");
            Assert.InRange(minute.MainsHz, gridHz - 1e-3, gridHz + 1e-3);
        }
    }

    private static double Median(List<double> values)
    {
        var sorted = values.Order().ToList();
        var half = sorted.Count / 2;
        return sorted.Count % 2 == 1 ? sorted[half] : 0.5 * (sorted[half - 1] + sorted[half]);
    }

    private sealed class Rows : IMinuteRowSink
    {
        public List<MinuteRow> All { get; } = [];

        public void OnMinuteRow(MinuteRow row) => All.Add(row);
    }

    private sealed class LedgerFeed(MinuteLedger ledger, IMinuteRowSink rows) : IAnalysisFrameSink
    {
        public void OnFrame(AnalysisFrame frame)
        {
            var endUtc = frame.StartUtc!.Value.AddSeconds(frame.EndSeconds - frame.StartSeconds);
            ledger.Observe(frame, endUtc, rows);
        }
    }
}
