using HumWatch.Core.Analysis;
using HumWatch.Core.Faults;
using HumWatch.Core.Signals;
using HumWatch.Core.Tests.Scenarios;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Core.Tests.Faults;

/// <summary>
/// Saturation inside the declared range against flat channels, on simulated rooms run through the whole analyser
/// (8 s spans every 2 s). The simulated background has an SD of about 25 µV per channel; its samples are continuous
/// (float32 of a sum of filtered noises), so a value repeats only where a fault or a converter makes it.
/// </summary>
public sealed class SaturationTests
{
    private const double Fs = 250;

    [Fact]
    public void A_channel_drifting_onto_its_amplifier_rail_inside_a_generous_declared_range_is_clipped_never_flat()
    {
        // The amplifier saturates at 2500 µV, well inside the ±10000 µV the file declares. The electrode's offset ramps
        // at 200 µV/s from 30 s, so the EEG on top (excursions under ±150 µV) first touches the rail near
        // 30 + (2500 − 150)/200 ≈ 41.8 s, keeps returning to it, and sits on it from about 30 + (2500 + 150)/200 ≈ 43.3 s.
        // The rail is one value (the amplifier's output stops there), 2500 µV from every working channel (≫ 8 SD).
        var room = Room(8, rangeUv: 10000);
        room.Faults = [new SimulatedFault { Kind = SimulatedFaultKind.OffsetDrift, Channel = "F3", OnsetSeconds = 30, DriftUvPerSecond = 200, LevelUv = 2500 }];

        var frames = ScenarioRunner.Run(room, 120, seed: 21);

        var f3 = room.Channels.FindIndex(c => c.Label == "F3");
        foreach (var frame in frames)
        {
            var (start, end) = (frame.StartSampleIndex / Fs, frame.EndSampleIndex / Fs);
            var where = $"frame {start}–{end} s";
            Assert.DoesNotContain(frame.Faults, f => f.Channel != f3);
            Assert.DoesNotContain(frame.Faults, f => f.Kind == ChannelFaultKind.Flat);
            if (end <= 41)
            {
                Assert.True(frame.Faults.Length == 0, $"{where}: {string.Join(", ", frame.Faults)} before the rail is reached");
            }

            if (end >= 44)
            {
                Assert.True(frame.Faults.Any(f => f.Channel == f3 && f.Kind == ChannelFaultKind.Clipped), $"{where}: not clipped");
            }

            if (start >= 44)
            {
                // The whole span sits on the rail: no signal, so it is left out of line finding like a flat channel.
                Assert.Equal(7, frame.AnalysedChannelCount);
                Assert.Equal(1.0, frame.Faults.Single().Fraction, 6);
            }
        }
    }

    [Fact]
    public void A_channel_hard_clipped_at_150_uV_inside_a_3200_uV_range_is_clipped_and_still_analysed()
    {
        // Gain 6 before a ±150 µV rail: the amplified EEG (SD ≈ 150 µV) is beyond the rail about a third of the time, so
        // the channel keeps returning to exactly +150 and −150 µV — hundreds of samples per span, where a continuous
        // signal reaches its extreme once. Nothing comes near the declared ±3200 µV, which alone would see nothing.
        var room = Room(10, rangeUv: 3200);
        room.Faults = [new SimulatedFault { Kind = SimulatedFaultKind.Clipped, Channel = "C3", OnsetSeconds = 20, OffsetSeconds = 60, Gain = 6, LevelUv = 150 }];

        var frames = ScenarioRunner.Run(room, 100, seed: 22);
        Assert.Equal(10, room.Channels.Count);

        var c3 = room.Channels.FindIndex(c => c.Label == "C3");
        var clippedFrames = 0;
        foreach (var frame in frames)
        {
            var (start, end) = (frame.StartSampleIndex / Fs, frame.EndSampleIndex / Fs);
            var overlapSeconds = Math.Min(end, 60) - Math.Max(start, 20);
            var clipped = frame.Faults.Where(f => f.Channel == c3 && f.Kind == ChannelFaultKind.Clipped).ToArray();
            Assert.DoesNotContain(frame.Faults, f => f.Kind != ChannelFaultKind.Clipped || f.Channel != c3);
            if (overlapSeconds >= 1)
            {
                Assert.True(clipped.Length == 1, $"frame {start}–{end} s overlaps the clipping by {overlapSeconds} s but is not clipped");
                clippedFrames++;
            }
            else if (overlapSeconds <= 0)
            {
                Assert.Empty(clipped);
            }

            if (start >= 20 && end <= 60)
            {
                Assert.InRange(clipped.Single().Fraction, 0.1, 0.6);
            }

            // The clipped channel still moves: it keeps its spectrum (as with clipping at the declared limits).
            Assert.Equal(10, frame.AnalysedChannelCount);
        }

        Assert.True(clippedFrames >= 18, $"only {clippedFrames} clipped frames");
    }

    [Fact]
    public void Disconnected_and_bridged_channels_with_tiny_noise_are_flat_never_clipped()
    {
        // F7 comes off at 20 s and settles at 25 µV, an ordinary level for it (about 1 SD from its mean), with 0.03 µV
        // of amplifier noise; F4 is bridged to its reference from the start: 0 µV with 0.02 µV of noise. Both have
        // almost no variance around a level the channels normally visit — flat, not a rail.
        var room = Room(8, rangeUv: 3276.7);
        room.Faults =
        [
            new SimulatedFault { Kind = SimulatedFaultKind.Flat, Channel = "F7", OnsetSeconds = 20, LevelUv = 25, NoiseUvRms = 0.03 },
            new SimulatedFault { Kind = SimulatedFaultKind.Flat, Channel = "F4", OnsetSeconds = 0, LevelUv = 0, NoiseUvRms = 0.02 },
        ];

        var frames = ScenarioRunner.Run(room, 80, seed: 23);

        var f7 = room.Channels.FindIndex(c => c.Label == "F7");
        var f4 = room.Channels.FindIndex(c => c.Label == "F4");
        foreach (var frame in frames)
        {
            var (start, end) = (frame.StartSampleIndex / Fs, frame.EndSampleIndex / Fs);
            Assert.DoesNotContain(frame.Faults, f => f.Kind == ChannelFaultKind.Clipped);
            Assert.Contains(frame.Faults, f => f.Channel == f4 && f.Kind == ChannelFaultKind.Flat && f.Fraction == 1);
            Assert.Equal(end >= 22, frame.Faults.Any(f => f.Channel == f7 && f.Kind == ChannelFaultKind.Flat));
            Assert.Equal(end >= 22 ? 6 : 7, frame.AnalysedChannelCount);
            if (start >= 20)
            {
                Assert.Equal(1.0, frame.Faults.Single(f => f.Channel == f7).Fraction);
            }
        }
    }

    [Fact]
    public void Clean_eeg_with_strong_alpha_on_19_channels_for_five_minutes_has_no_fault()
    {
        // Posterior alpha of 40 µV RMS over a 20 µV 1/f background (scalp EEG 10–100 µV, common practice, no source):
        // large, nearly sinusoidal, but never pinned and never repeating its extreme.
        var room = Room(19, rangeUv: 3276.7);
        room.Background = new BackgroundSettings { AlphaUvRms = 40, BetaUvRms = 8, PinkUvRms = 20 };

        var frames = ScenarioRunner.Run(room, 300, seed: 24);

        Assert.Equal(147, frames.Count);
        var faulty = frames.Where(f => f.Faults.Length > 0).ToArray();
        Assert.True(faulty.Length == 0, $"{faulty.Length} frames with faults, e.g. {string.Join(", ", faulty.FirstOrDefault()?.Faults ?? [])}");
    }

    [Theory]
    [InlineData(3276.7)]
    [InlineData(32767.0)]
    public void Edf_16_bit_quantised_eeg_repeats_values_but_is_not_clipped(double rangeUv)
    {
        // EDF stores integers: physical = (digital − dmin)·(pmax − pmin)/(dmax − dmin) + pmin (EDF, Kemp et al. 1992),
        // so ±3276.7 µV over −32768..32767 gives 0.1 µV steps and ±32767 µV gives 1 µV steps. The EEG then repeats
        // values, its extremes among them (a few samples share the top step: about 1 + 3.5·step/SD for Gaussian-like
        // samples), far below RepeatedExtremeFraction of a span.
        var room = Room(19, rangeUv);
        room.Background = new BackgroundSettings { AlphaUvRms = 40 };

        var (frames, eegTopRepeats, _) = RunQuantised(room, 120, seed: 25, rangeUv, deadChannel: -1, new AnalysisOptions());

        Assert.True(eegTopRepeats >= 2, $"the EEG never repeated its extreme ({eegTopRepeats}); the case would test nothing");
        Assert.All(frames, frame => Assert.Empty(frame.Faults));
    }

    [Fact]
    public void A_near_dead_input_read_in_steps_of_its_own_noise_is_not_clipped()
    {
        // F4 has nothing attached: 0.2 µV of amplifier noise around 0 µV, read in the 1 µV steps of a 16-bit ±32767 µV
        // EDF, whose codes −1 and 0 stand for −0.5 and +0.5 µV (0 µV falls half-way). Leaving them takes |x| > 1 µV,
        // 5 SD (P ≈ 3·10⁻⁷ per sample), so it lives on those two values, about half of its samples on each — at its extremes by quantisation alone, where a continuous signal touches them once.
        // Its SD (≈ 0.5 µV, from the steps) is above the flat threshold, so only the coarse-step guard (a 1 µV step
        // ≥ 0.5 SD) keeps this from reading as a rail.
        const double RangeUv = 32767;
        var room = Room(8, RangeUv);
        room.Faults = [new SimulatedFault { Kind = SimulatedFaultKind.Flat, Channel = "F4", NoiseUvRms = 0.2 }];
        var f4 = room.Channels.FindIndex(c => c.Label == "F4");

        var (frames, _, deadTopRepeats) = RunQuantised(room, 120, seed: 26, RangeUv, f4, new AnalysisOptions());

        Assert.True(deadTopRepeats >= 500, $"the dead input repeated its extreme only {deadTopRepeats} times in a span");
        Assert.All(frames, frame => Assert.Empty(frame.Faults));

        var unguarded = new AnalysisOptions { Faults = new FaultOptions { CoarseStepSd = 1e9 } };
        var (withoutGuard, _, _) = RunQuantised(room, 120, seed: 26, RangeUv, f4, unguarded);
        Assert.All(withoutGuard, frame => Assert.True(frame.Faults.Any(f => f.Channel == f4 && f.Kind == ChannelFaultKind.Clipped), $"{frame.StartSampleIndex / Fs}: {string.Join(", ", frame.Faults)}"));
    }

    private static SimulatedRoom Room(int channels, double rangeUv)
    {
        var room = ScenarioRunner.Room(Fs, channels);
        room.Channels = [.. room.Channels.Select(c => new SimulatedChannel { Label = c.Label, RangeMinUv = -rangeUv, RangeMaxUv = rangeUv })];
        return room;
    }

    // Runs the room through EDF's 16-bit quantisation; also returns the most samples that shared an 8 s span's highest
    // or lowest value on an EEG channel, and on the dead channel.
    private static (List<FrameSnapshot> Frames, int EegTopRepeats, int DeadTopRepeats) RunQuantised(SimulatedRoom room, double seconds, int seed, double rangeUv, int deadChannel, AnalysisOptions options)
    {
        const int DigitalMin = -32768;
        const int DigitalMax = 32767;
        var physicalMin = -rangeUv;
        var gain = 2 * rangeUv / (DigitalMax - DigitalMin);
        var simulator = new RoomSimulator(room, seed);
        var analyzer = new StreamAnalyzer(simulator.Layout, options);
        var recorder = new FrameRecorder();
        var channels = simulator.Layout.ChannelCount;
        var span = (int)(8 * Fs);
        var eegRepeats = 0;
        var deadRepeats = 0;
        for (var s = 0; s < seconds / 8; s++)
        {
            var chunk = simulator.Next(span);
            var samples = chunk.SamplesUv.ToArray();
            for (var i = 0; i < samples.Length; i++)
            {
                var digital = Math.Clamp(Math.Round(((samples[i] - physicalMin) / gain) + DigitalMin), DigitalMin, DigitalMax);
                samples[i] = (float)(((digital - DigitalMin) * gain) + physicalMin);
            }

            for (var c = 0; c < channels; c++)
            {
                var values = samples.AsSpan(c * span, span);
                var max = values[0];
                var min = values[0];
                foreach (var v in values)
                {
                    max = Math.Max(max, v);
                    min = Math.Min(min, v);
                }

                var repeats = Math.Max(values.Count(max), values.Count(min));
                if (c == deadChannel)
                {
                    deadRepeats = Math.Max(deadRepeats, repeats);
                }
                else
                {
                    eegRepeats = Math.Max(eegRepeats, repeats);
                }
            }

            analyzer.Append(new SampleChunk(simulator.Layout, chunk.FirstSampleIndex, span, samples), recorder);
        }

        return (recorder.Frames, eegRepeats, deadRepeats);
    }
}
