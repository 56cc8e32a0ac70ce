using HumWatch.Core.Signals;

namespace HumWatch.Simulation;

/// <summary>
/// Generates one room's stream as <see cref="SampleChunk"/>s, deterministic for a given seed whatever the chunk sizes
/// (every channel and tone owns a random source derived from the seed). Not thread-safe; one instance per stream.
/// </summary>
public sealed class RoomSimulator
{
    private readonly ChannelBackground[] _channels;
    private readonly ToneSource[] _tones;
    private readonly FaultWindow[] _faults;
    private readonly DateTimeOffset? _startUtc;
    private double[] _toneScratch = [];

    /// <summary>Builds the room's generators; <paramref name="seed"/> fixes every random process.</summary>
    public RoomSimulator(SimulatedRoom room, int seed, DateTimeOffset? startUtc = null)
    {
        ArgumentNullException.ThrowIfNull(room);
        var errors = room.Validate("room");
        if (errors.Count > 0)
        {
            throw new ArgumentException("Invalid simulated room: " + string.Join(" ", errors), nameof(room));
        }

        _startUtc = startUtc;
        var fs = room.SampleRateHz;
        var montage = room.EffectiveChannels();
        var infos = new ChannelInfo[montage.Count];
        var index = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var c = 0; c < montage.Count; c++)
        {
            infos[c] = new ChannelInfo(montage[c].Label, montage[c].RangeMinUv, montage[c].RangeMaxUv);
            index[montage[c].Label] = c;
        }

        Layout = new StreamLayout(fs, infos);
        var model = new BackgroundModel(room.Background, fs);
        var muscle = new HashSet<string>(room.Background.MuscleChannels, StringComparer.Ordinal);
        _channels = new ChannelBackground[montage.Count];
        for (var c = 0; c < montage.Count; c++)
        {
            var label = montage[c].Label;
            var isMuscle = muscle.Count > 0 ? muscle.Contains(label) : IsTemporal(label);
            _channels[c] = new ChannelBackground(model, NoiseSource.DeriveSeed(seed, c, 1), IsPosterior(label), isMuscle);
        }

        _tones = new ToneSource[room.Tones.Count];
        for (var t = 0; t < _tones.Length; t++)
        {
            var tone = room.Tones[t];
            var mask = new bool[montage.Count];
            for (var c = 0; c < mask.Length; c++)
            {
                mask[c] = tone.Channels.Count == 0;
            }

            foreach (var label in tone.Channels)
            {
                mask[index[label]] = true;
            }

            _tones[t] = new ToneSource(tone, fs, NoiseSource.DeriveSeed(seed, t, 2), mask);
        }

        _faults = new FaultWindow[room.Faults.Count];
        for (var f = 0; f < _faults.Length; f++)
        {
            var fault = room.Faults[f];
            var c = index[fault.Channel];

            // Saturation happens in the amplifier, before the converter: a set LevelUv is the rail even inside the range.
            var rail = fault.LevelUv != 0 ? Math.Abs(fault.LevelUv) : 200;
            var useRange = fault.LevelUv == 0 && montage[c].RangeMinUv is not null && montage[c].RangeMaxUv is not null;
            _faults[f] = new FaultWindow(
                fault,
                c,
                (long)Math.Round(fault.OnsetSeconds * fs),
                fault.OffsetSeconds is { } off ? (long)Math.Round(off * fs) : long.MaxValue,
                fs,
                useRange ? montage[c].RangeMinUv!.Value : -rail,
                useRange ? montage[c].RangeMaxUv!.Value : rail,
                new NoiseSource(NoiseSource.DeriveSeed(seed, f, 3)));
        }
    }

    /// <summary>Rate and channels of the generated stream.</summary>
    public StreamLayout Layout { get; }

    /// <summary>Index of the next sample to be generated.</summary>
    public long PositionSamples { get; private set; }

    /// <summary>Generates the next <paramref name="samplesPerChannel"/> samples into a new chunk.</summary>
    public SampleChunk Next(int samplesPerChannel)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(samplesPerChannel, 1);
        var buffer = new float[samplesPerChannel * Layout.ChannelCount];
        var first = PositionSamples;
        Fill(buffer, samplesPerChannel);
        DateTimeOffset? utc = _startUtc is { } start ? start.AddTicks((long)Math.Round(first / Layout.SampleRateHz * TimeSpan.TicksPerSecond)) : null;
        return new SampleChunk(Layout, first, samplesPerChannel, buffer, utc);
    }

    /// <summary>Generates the next <paramref name="samplesPerChannel"/> samples, channel-major, into <paramref name="channelMajor"/>.</summary>
    public void Fill(Span<float> channelMajor, int samplesPerChannel)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(samplesPerChannel);
        if (channelMajor.Length < (long)samplesPerChannel * Layout.ChannelCount)
        {
            throw new ArgumentException($"Buffer must hold {Layout.ChannelCount} × {samplesPerChannel} samples.", nameof(channelMajor));
        }

        var first = PositionSamples;
        for (var c = 0; c < _channels.Length; c++)
        {
            _channels[c].Generate(channelMajor.Slice(c * samplesPerChannel, samplesPerChannel), first);
        }

        if (_toneScratch.Length < samplesPerChannel)
        {
            _toneScratch = new double[samplesPerChannel];
        }

        var scratch = _toneScratch.AsSpan(0, samplesPerChannel);
        foreach (var tone in _tones)
        {
            // Every tone runs on every block so its phase stays continuous; adding it is skipped while it is off.
            tone.Generate(scratch, first);
            if (!tone.IsOnWithin(first, samplesPerChannel))
            {
                continue;
            }

            for (var c = 0; c < _channels.Length; c++)
            {
                if (!tone.ChannelMask[c])
                {
                    continue;
                }

                var target = channelMajor.Slice(c * samplesPerChannel, samplesPerChannel);
                for (var i = 0; i < target.Length; i++)
                {
                    target[i] = (float)(target[i] + scratch[i]);
                }
            }
        }

        foreach (var fault in _faults)
        {
            fault.Apply(channelMajor.Slice(fault.Channel * samplesPerChannel, samplesPerChannel), first);
        }

        PositionSamples = first + samplesPerChannel;
    }

    private static bool IsPosterior(string label) =>
        label.StartsWith('O') || label.StartsWith('P') || label is "T5" or "T6";

    private static bool IsTemporal(string label) =>
        label.StartsWith('T') || label is "F7" or "F8";

    private sealed class FaultWindow(SimulatedFault fault, int channel, long start, long end, double sampleRateHz, double minUv, double maxUv, NoiseSource noise)
    {
        public int Channel => channel;

        public void Apply(Span<float> samples, long first)
        {
            var from = Math.Max(0, start - first);
            var to = Math.Min(samples.Length, end - first);
            for (var i = from; i < to; i++)
            {
                var x = samples[(int)i];
                samples[(int)i] = fault.Kind switch
                {
                    // The noise source is drawn once per sample in order, so the samples do not depend on chunk sizes.
                    SimulatedFaultKind.Flat => (float)(fault.LevelUv + (fault.NoiseUvRms > 0 ? fault.NoiseUvRms * noise.Gaussian() : 0)),
                    SimulatedFaultKind.Clipped => (float)Math.Clamp(x * fault.Gain, minUv, maxUv),
                    SimulatedFaultKind.OffsetDrift => (float)Math.Clamp(x + (fault.DriftUvPerSecond * (first + i - start) / sampleRateHz), minUv, maxUv),
                    _ => float.NaN,
                };
            }
        }
    }
}
