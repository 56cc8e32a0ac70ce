using HumWatch.Core.Analysis;
using HumWatch.Core.Lines;
using HumWatch.Core.Tests.Lines;
using HumWatch.Simulation;
using Xunit;
using Xunit.Abstractions;

namespace HumWatch.Core.Tests.Scenarios;

/// <summary>Numbers for the report; run with HUMWATCH_MEASURE=1 (slow, prints, loose sanity asserts only).</summary>
public sealed class Measurements(ITestOutputHelper output)
{
    [MeasurementFact]
    public void Detection_limit_false_alarms_and_estimation_errors()
    {
        // Smallest 50/60/150 Hz line found in ≥ 95 % of 60 s, 500 Hz single-channel recordings (Cz, default background):
        // a recording counts when at least half of its 27 frames report the line.
        foreach (var frequency in new[] { 50.0, 60.0, 150.0 })
        {
            foreach (var amplitude in new[] { 0.7, 1.0, 1.5, 1.75, 2.0 })
            {
                var found = 0;
                const int recordings = 20;
                for (var r = 0; r < recordings; r++)
                {
                    var room = new SimulatedRoom { SampleRateHz = 500, Channels = [new SimulatedChannel { Label = "Cz" }], Tones = [new SimulatedTone { FrequencyHz = frequency, AmplitudeUvRms = amplitude }] };
                    var frames = ScenarioRunner.Run(room, 60, 1000 + r, chunkSeconds: 10);
                    var hits = frames.Count(f => f.Near(frequency) is not null);
                    found += hits * 2 >= frames.Count ? 1 : 0;
                }

                output.WriteLine($"{frequency} Hz {amplitude} µV: {found}/{recordings} recordings");
            }
        }

        // Frequency/amplitude errors of the line finder in white noise at given prominence (K = 3, 4 s segments, 500 Hz).
        foreach (var prominence in new[] { 10.0, 20.0, 30.0 })
        {
            var random = new Random(77);
            var floor = 2.0 * 100 / 500; // 10 µV white noise: density 2σ²/fs
            var amplitude = Math.Sqrt(Math.Pow(10, prominence / 10) * floor * 1.5 * 0.25);
            var finder = new LineFinder(new LineFinderOptions(), 1001, 0.25, LineFinderTests.WelchDof());
            var peaks = new ChannelPeak[finder.Capacity];
            var errorsHz = new List<double>();
            var errorsAmp = new List<double>();
            var detected = 0;
            for (var t = 0; t < 300; t++)
            {
                var f = 20 + (random.NextDouble() * 200);
                var psd = SpectrumBuilder.Welch(LineFinderTests.Tone(4000, f, amplitude, random.NextDouble() * 6.28, 10, random), 500, 2000);
                var n = finder.Find(psd, peaks);
                var near = peaks.Take(n).Where(p => Math.Abs(p.FrequencyHz - f) < 0.5).ToList();
                if (near.Count == 1)
                {
                    detected++;
                    errorsHz.Add(near[0].FrequencyHz - f);
                    errorsAmp.Add((near[0].AmplitudeUvRms / amplitude) - 1);
                }
            }

            output.WriteLine($"{prominence} dB (bin-centred): detected {detected}/300, freq RMS {Rms(errorsHz):F4} Hz max {errorsHz.DefaultIfEmpty().Max(Math.Abs):F4}, amp RMS {100 * Rms(errorsAmp):F1} % max {100 * errorsAmp.DefaultIfEmpty().Max(Math.Abs):F1} %");
        }

        // False alarms on clean data: 32 ch × 40 min at 500 Hz with the default background.
        var clean = ScenarioRunner.Room(500, 32);
        var cleanFrames = ScenarioRunner.Run(clean, 2400, 555, chunkSeconds: 10);
        var lines = cleanFrames.Sum(f => f.Lines.Length);
        output.WriteLine($"clean default background: {lines} lines in {cleanFrames.Count} frames = {lines / (32 * 40.0 / 60):F3} per channel-hour");
        Assert.NotEmpty(cleanFrames);
    }

    [MeasurementFact]
    public void Mains_frequency_error_at_5_uV_over_60_s()
    {
        var trials = FrequencyAccuracyTests.MainsTrials();
        foreach (var (frequency, error, frames, seen) in trials)
        {
            output.WriteLine($"{frequency:F4} Hz: {seen}/{frames} frames, error {1000 * error:F3} mHz");
        }

        var sorted = trials.Select(t => t.ErrorHz).Order().ToList();
        output.WriteLine($"5 µV, 60 s, 20 recordings: median error {1000 * 0.5 * (sorted[9] + sorted[10]):F3} mHz, max {1000 * sorted[^1]:F3} mHz");
        Assert.Equal(20, sorted.Count);
    }

    private static double Rms(List<double> values) => values.Count == 0 ? double.NaN : Math.Sqrt(values.Average(v => v * v));
}
