using HumWatch.Core.Spectra;
using Xunit;

namespace HumWatch.Simulation.Tests;

public sealed class SimulatorTests
{
    private static BackgroundSettings Silent() => new()
    {
        PinkUvRms = 0,
        AlphaUvRms = 0,
        BetaUvRms = 0,
        MuscleUvRms = 0,
        AmplifierNoiseUvRms = 0,
    };

    [Fact]
    public void Tone_alone_has_the_requested_rms_and_its_harmonic_the_relative_one()
    {
        var room = new SimulatedRoom
        {
            SampleRateHz = 500,
            Channels = SimulatedRoom.Montage(2),
            Background = Silent(),
            Tones = [new SimulatedTone { FrequencyHz = 50, AmplitudeUvRms = 3, HarmonicAmplitudes = [0.5] }],
        };
        var chunk = new RoomSimulator(room, 1).Next(5000);
        var x = chunk.Channel(0).ToArray().Select(v => (double)v).ToArray();

        var rms = Math.Sqrt(x.Select(v => v * v).Average());

        // RMS of a sum of sinusoids = √(Σ A_rms²) (Parseval, handbook): √(9 + 2.25).
        Assert.InRange(rms, Math.Sqrt(11.25) * 0.995, Math.Sqrt(11.25) * 1.005);
    }

    [Fact]
    public void Harmonic_above_Nyquist_folds_to_the_alias_frequency()
    {
        var room = new SimulatedRoom
        {
            SampleRateHz = 250,
            Channels = SimulatedRoom.Montage(1),
            Background = Silent(),
            Tones = [new SimulatedTone { FrequencyHz = 50, AmplitudeUvRms = 0.001, HarmonicAmplitudes = [0, 1000] }],
        };
        var x = new RoomSimulator(room, 2).Next(2000).Channel(0).ToArray().Select(v => (double)v).ToArray();

        var psd = Welch(x, 250, 1000);
        var strongest = Array.IndexOf(psd, psd.Max()) * 0.25;

        Assert.Equal(100, strongest, 3); // folding (computed, f_a = |f − k·fs|): fs = 250, 150 Hz → 100 Hz
    }

    [Fact]
    public void Background_follows_one_over_f_and_alpha_is_stronger_on_posterior_channels()
    {
        var room = new SimulatedRoom { SampleRateHz = 500, Channels = SimulatedRoom.Montage(19) };
        var chunk = new RoomSimulator(room, 3).Next(500 * 120);
        var fz = Welch(chunk.Channel(4));
        var o1 = Welch(chunk.Channel(17));

        // 1/f: a factor 2 in frequency halves the density (−3 dB/octave), between rhythms: 35 vs 70 Hz on Fz,
        // averaged over ±2 Hz. Amplifier noise (0.7 µV) is far below the background there.
        var ratio = Band(fz, 35) / Band(fz, 70);
        Assert.InRange(10 * Math.Log10(ratio), 2.0, 4.5); // 1/f: 3.01 dB per octave (definition of pink noise)

        // Posterior alpha is three times the amplitude (nine times the power) of frontal alpha in this model.
        Assert.True(Band(o1, 10) > 3 * Band(fz, 10));
    }

    [Fact]
    public void Same_seed_gives_the_same_samples_whatever_the_chunk_sizes()
    {
        var room = new SimulatedRoom { SampleRateHz = 256, Channels = SimulatedRoom.Montage(4), Tones = [new SimulatedTone { FrequencyHz = 60, AmplitudeUvRms = 2, WanderHz = 0.05 }] };
        var whole = new RoomSimulator(room, 11).Next(2560);
        var pieces = new RoomSimulator(room, 11);
        var a = pieces.Next(1000);
        var b = pieces.Next(1560);

        for (var c = 0; c < 4; c++)
        {
            Assert.Equal(whole.Channel(c)[..1000].ToArray(), a.Channel(c).ToArray());
            Assert.Equal(whole.Channel(c)[1000..].ToArray(), b.Channel(c).ToArray());
        }

        Assert.NotEqual(whole.Channel(0).ToArray(), new RoomSimulator(room, 12).Next(2560).Channel(0).ToArray());
    }

    [Fact]
    public void Faults_make_flat_clipped_and_NaN_samples_in_their_windows()
    {
        var room = new SimulatedRoom
        {
            SampleRateHz = 100,
            Channels = [new() { Label = "A" }, new() { Label = "B", RangeMinUv = -100, RangeMaxUv = 100 }, new() { Label = "C" }],
            Faults =
            [
                new SimulatedFault { Kind = SimulatedFaultKind.Flat, Channel = "A", OnsetSeconds = 1, OffsetSeconds = 2, LevelUv = 7 },
                new SimulatedFault { Kind = SimulatedFaultKind.Clipped, Channel = "B", OnsetSeconds = 0 },
                new SimulatedFault { Kind = SimulatedFaultKind.NaNBurst, Channel = "C", OnsetSeconds = 2, OffsetSeconds = 2.5 },
            ],
        };
        var chunk = new RoomSimulator(room, 5).Next(300);

        Assert.All(chunk.Channel(0)[100..200].ToArray(), v => Assert.Equal(7f, v));
        Assert.NotEqual(7f, chunk.Channel(0)[99]);
        Assert.Contains(chunk.Channel(1).ToArray(), v => v == 100f || v == -100f);
        Assert.All(chunk.Channel(1).ToArray(), v => Assert.InRange(v, -100f, 100f));
        Assert.All(chunk.Channel(2)[200..250].ToArray(), v => Assert.True(float.IsNaN(v)));
        Assert.True(float.IsFinite(chunk.Channel(2)[250]));
    }

    [Fact]
    public void Saturation_uses_the_amplifier_rail_inside_the_range_and_a_drift_ends_pinned_on_it()
    {
        var room = new SimulatedRoom
        {
            SampleRateHz = 100,
            Channels = [new() { Label = "A", RangeMinUv = -3200, RangeMaxUv = 3200 }, new() { Label = "B", RangeMinUv = -3200, RangeMaxUv = 3200 }, new() { Label = "C" }],
            Faults =
            [
                new SimulatedFault { Kind = SimulatedFaultKind.Clipped, Channel = "A", Gain = 20, LevelUv = 150 },
                new SimulatedFault { Kind = SimulatedFaultKind.OffsetDrift, Channel = "B", OnsetSeconds = 1, DriftUvPerSecond = 1000, LevelUv = 2000 },
                new SimulatedFault { Kind = SimulatedFaultKind.Flat, Channel = "C", LevelUv = 5, NoiseUvRms = 0.05 },
            ],
        };
        var chunk = new RoomSimulator(room, 6).Next(400);

        Assert.All(chunk.Channel(0).ToArray(), v => Assert.InRange(v, -150f, 150f));
        Assert.Contains(chunk.Channel(0).ToArray(), v => v == 150f);
        Assert.All(chunk.Channel(1)[350..].ToArray(), v => Assert.Equal(2000f, v)); // 1000 µV/s from 1 s: 2500 µV of offset by 3.5 s, past the rail by more than any EEG excursion
        Assert.InRange(chunk.Channel(1)[150], 300f, 700f); // ≈ 500 µV of offset 0.5 s in, plus the EEG
        var flat = chunk.Channel(2).ToArray();
        Assert.All(flat, v => Assert.InRange(v, 4.7f, 5.3f));
        Assert.True(flat.Distinct().Count() > 300, "the flat level's noise should make its samples differ");
    }

    [Fact]
    public void Scenario_round_trips_through_camel_case_json()
    {
        var scenario = new SimulationScenario
        {
            Name = "ward-3 evening",
            Seed = 42,
            DurationSeconds = 600,
            Rooms =
            [
                new SimulatedRoom
                {
                    Name = "room-b2",
                    SampleRateHz = 256,
                    Channels = SimulatedRoom.Montage(4),
                    Tones = [new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = 4, HarmonicAmplitudes = [0.2, 0.4], Channels = ["Fp1"], OnsetSeconds = 30, OffsetSeconds = 90, WanderHz = 0.05 }],
                    Faults = [new SimulatedFault { Kind = SimulatedFaultKind.NaNBurst, Channel = "F7", OnsetSeconds = 5, OffsetSeconds = 6 }],
                },
            ],
        };

        var json = scenario.ToJson();
        var back = SimulationScenario.FromJson(json);

        Assert.Contains("\"sampleRateHz\": 256", json, StringComparison.Ordinal);
        Assert.Contains("\"kind\": \"naNBurst\"", json, StringComparison.Ordinal);
        Assert.Equal(json, back.ToJson());
        Assert.Equal(
            scenario.CreateRoom(0).Next(512).Channel(0).ToArray(),
            back.CreateRoom(0).Next(512).Channel(0).ToArray());
    }

    [Fact]
    public void Scenario_naming_an_unknown_channel_is_rejected_with_the_setting()
    {
        const string json = """{ "rooms": [ { "channels": [ { "label": "Cz" } ], "tones": [ { "frequencyHz": 50, "channels": ["Oz"] } ] } ] }""";

        var error = Assert.Throws<System.Text.Json.JsonException>(() => SimulationScenario.FromJson(json));

        Assert.Contains("rooms[0].tones[0].channels", error.Message, StringComparison.Ordinal);
    }

    private static double[] Welch(ReadOnlySpan<float> samples)
    {
        var x = new double[samples.Length];
        for (var i = 0; i < x.Length; i++)
        {
            x[i] = samples[i];
        }

        return Welch(x, 500, 2000);
    }

    /// <summary>Welch PSD with 50 % overlap by Core's one-shot WelchPsd, which Core.Tests hold equal to scipy.signal.welch.</summary>
    private static double[] Welch(double[] x, double sampleRateHz, int segmentLength)
    {
        var psd = new double[(segmentLength / 2) + 1];
        WelchPsd.Compute(x, sampleRateHz, segmentLength, segmentLength / 2, psd);
        return psd;
    }

    private static double Band(double[] psd, double centreHz)
    {
        var from = (int)((centreHz - 2) / 0.25);
        var to = (int)((centreHz + 2) / 0.25);
        return psd[from..(to + 1)].Average();
    }
}
