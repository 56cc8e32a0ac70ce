using System.Text.Json;
using System.Text.Json.Serialization;

namespace HumWatch.Simulation;

/// <summary>
/// A simulated site: rooms (one stream each) with their montage, background EEG, contamination tones and channel
/// faults on a timeline. Serialised as camelCase JSON (see <see cref="ToJson"/> / <see cref="FromJson"/>).
/// </summary>
public sealed class SimulationScenario
{
    private static readonly JsonSerializerOptions JsonOptions = new()
    {
        PropertyNamingPolicy = JsonNamingPolicy.CamelCase,
        WriteIndented = true,
        DefaultIgnoreCondition = JsonIgnoreCondition.WhenWritingNull,
        Converters = { new JsonStringEnumConverter(JsonNamingPolicy.CamelCase) },
    };

    /// <summary>Scenario name shown in logs.</summary>
    public string Name { get; set; } = "scenario";

    /// <summary>Seed of every random process; the same seed gives the same samples. The default is 1.</summary>
    public int Seed { get; set; } = 1;

    /// <summary>Length of the timeline, s; 0 means open-ended. The default is 0.</summary>
    public double DurationSeconds { get; set; }

    /// <summary>UTC time of the first sample, when chunks should carry times.</summary>
    public DateTimeOffset? StartUtc { get; set; }

    public List<SimulatedRoom> Rooms { get; set; } = [];

    /// <summary>A simulator for room <paramref name="roomIndex"/>, seeded from <see cref="Seed"/> and the room's position.</summary>
    public RoomSimulator CreateRoom(int roomIndex)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(roomIndex);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(roomIndex, Rooms.Count);
        return new RoomSimulator(Rooms[roomIndex], NoiseSource.DeriveSeed(Seed, roomIndex, 0), StartUtc);
    }

    /// <summary>Serialises to camelCase JSON.</summary>
    public string ToJson() => JsonSerializer.Serialize(this, JsonOptions);

    /// <summary>Reads a scenario from camelCase JSON; throws <see cref="JsonException"/> naming the problem, and validates.</summary>
    public static SimulationScenario FromJson(string json)
    {
        ArgumentNullException.ThrowIfNull(json);
        var scenario = JsonSerializer.Deserialize<SimulationScenario>(json, JsonOptions)
            ?? throw new JsonException("Scenario JSON is empty (null).");
        var errors = scenario.Validate();
        if (errors.Count > 0)
        {
            throw new JsonException("Invalid scenario: " + string.Join(" ", errors));
        }

        return scenario;
    }

    /// <summary>One message per problem, naming the setting; empty when valid.</summary>
    public IReadOnlyList<string> Validate()
    {
        var errors = new List<string>();
        if (!(DurationSeconds >= 0))
        {
            errors.Add($"durationSeconds must be zero (open-ended) or positive (got {DurationSeconds}).");
        }

        for (var i = 0; i < Rooms.Count; i++)
        {
            errors.AddRange(Rooms[i].Validate($"rooms[{i}]"));
        }

        return errors;
    }
}

/// <summary>One acquisition room: a stream with a montage, its background, tones and faults.</summary>
public sealed class SimulatedRoom
{
    /// <summary>Stream id, e.g. "room-b2".</summary>
    public string Name { get; set; } = "room";

    /// <summary>Samples per second per channel. The default is 500 Hz.</summary>
    public double SampleRateHz { get; set; } = 500;

    /// <summary>Montage; empty means the 19-electrode 10–20 set.</summary>
    public List<SimulatedChannel> Channels { get; set; } = [];

    public BackgroundSettings Background { get; set; } = new();

    public List<SimulatedTone> Tones { get; set; } = [];

    public List<SimulatedFault> Faults { get; set; } = [];

    /// <summary>The 19 electrodes of the international 10–20 system.</summary>
    public static IReadOnlyList<string> TenTwentyLabels { get; } =
        ["Fp1", "Fp2", "F7", "F3", "Fz", "F4", "F8", "T3", "C3", "Cz", "C4", "T4", "T5", "P3", "Pz", "P4", "T6", "O1", "O2"];

    /// <summary>A montage of <paramref name="count"/> channels: the 10–20 labels first, then "E20", "E21", ….</summary>
    public static List<SimulatedChannel> Montage(int count)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(count, 1);
        var channels = new List<SimulatedChannel>(count);
        for (var i = 0; i < count; i++)
        {
            channels.Add(new SimulatedChannel { Label = i < TenTwentyLabels.Count ? TenTwentyLabels[i] : $"E{i + 1}" });
        }

        return channels;
    }

    internal IReadOnlyList<SimulatedChannel> EffectiveChannels() => Channels.Count > 0 ? Channels : Montage(TenTwentyLabels.Count);

    public IReadOnlyList<string> Validate(string prefix)
    {
        var errors = new List<string>();
        if (!(SampleRateHz >= 10 && SampleRateHz <= 100000))
        {
            errors.Add($"{prefix}.sampleRateHz must be between 10 and 100000 Hz (got {SampleRateHz}).");
        }

        var labels = new HashSet<string>(StringComparer.Ordinal);
        foreach (var channel in EffectiveChannels())
        {
            if (string.IsNullOrWhiteSpace(channel.Label) || !labels.Add(channel.Label))
            {
                errors.Add($"{prefix}.channels: label '{channel.Label}' is empty or repeated.");
            }

            if (channel.RangeMinUv is { } min && channel.RangeMaxUv is { } max && !(max > min))
            {
                errors.Add($"{prefix}.channels '{channel.Label}': rangeMaxUv must be above rangeMinUv.");
            }
        }

        errors.AddRange(Background.Validate($"{prefix}.background"));
        for (var i = 0; i < Tones.Count; i++)
        {
            errors.AddRange(Tones[i].Validate($"{prefix}.tones[{i}]", labels));
        }

        for (var i = 0; i < Faults.Count; i++)
        {
            errors.AddRange(Faults[i].Validate($"{prefix}.faults[{i}]", labels));
        }

        return errors;
    }
}

/// <summary>One electrode of a simulated montage.</summary>
public sealed class SimulatedChannel
{
    public string Label { get; set; } = "";

    /// <summary>Lowest representable value, µV (clipping limit); null when unknown.</summary>
    public double? RangeMinUv { get; set; }

    /// <summary>Highest representable value, µV; null when unknown.</summary>
    public double? RangeMaxUv { get; set; }
}

/// <summary>Background EEG and amplifier noise, per channel and independent across channels.</summary>
public sealed class BackgroundSettings
{
    /// <summary>RMS of the 1/f ("pink") background from 0.5 Hz to Nyquist, µV. The default is 15 µV (scalp EEG 10–100 µV).</summary>
    public double PinkUvRms { get; set; } = 15;

    /// <summary>Alpha rhythm RMS on posterior channels (P*, O*, T5/T6), µV; elsewhere a third of it. The default is 12 µV.</summary>
    public double AlphaUvRms { get; set; } = 12;

    /// <summary>Alpha centre frequency, Hz; each channel deviates by up to ±0.5 Hz. The default is 10 Hz.</summary>
    public double AlphaHz { get; set; } = 10;

    /// <summary>Alpha −3 dB bandwidth, Hz. The default is 2 Hz.</summary>
    public double AlphaBandwidthHz { get; set; } = 2;

    /// <summary>Beta rhythm RMS (15–30 Hz), µV. The default is 4 µV.</summary>
    public double BetaUvRms { get; set; } = 4;

    /// <summary>Muscle burst RMS while a burst is on (broadband 20–150 Hz), µV. The default is 10 µV.</summary>
    public double MuscleUvRms { get; set; } = 10;

    /// <summary>Mean muscle bursts per minute on a muscle channel. The default is 3.</summary>
    public double MuscleBurstsPerMinute { get; set; } = 3;

    /// <summary>Channels with muscle bursts; empty means the temporal and lateral frontal ones (T*, F7, F8). The default is empty.</summary>
    public List<string> MuscleChannels { get; set; } = [];

    /// <summary>Amplifier white noise, µV RMS over the full band. The default is 0.7 µV.</summary>
    public double AmplifierNoiseUvRms { get; set; } = 0.7;

    public IReadOnlyList<string> Validate(string prefix)
    {
        var errors = new List<string>();
        Check(errors, PinkUvRms, $"{prefix}.pinkUvRms");
        Check(errors, AlphaUvRms, $"{prefix}.alphaUvRms");
        Check(errors, BetaUvRms, $"{prefix}.betaUvRms");
        Check(errors, MuscleUvRms, $"{prefix}.muscleUvRms");
        Check(errors, MuscleBurstsPerMinute, $"{prefix}.muscleBurstsPerMinute");
        Check(errors, AmplifierNoiseUvRms, $"{prefix}.amplifierNoiseUvRms");
        if (!(AlphaHz > 0) || !(AlphaBandwidthHz > 0))
        {
            errors.Add($"{prefix}.alphaHz and alphaBandwidthHz must be positive (got {AlphaHz}, {AlphaBandwidthHz}).");
        }

        return errors;
    }

    private static void Check(List<string> errors, double value, string name)
    {
        if (!(value >= 0) || !double.IsFinite(value))
        {
            errors.Add($"{name} must be zero or a positive finite number (got {value}).");
        }
    }
}

/// <summary>A narrowband contamination: a fundamental with optional harmonics, on some channels, for a time.</summary>
public sealed class SimulatedTone
{
    /// <summary>Name for logs, e.g. "mains" or "monitor".</summary>
    public string Name { get; set; } = "tone";

    /// <summary>Fundamental frequency, Hz (may exceed Nyquist: it folds like a real sampled tone).</summary>
    public double FrequencyHz { get; set; } = 50;

    /// <summary>RMS of the fundamental on an affected channel, µV.</summary>
    public double AmplitudeUvRms { get; set; } = 5;

    /// <summary>Harmonic amplitudes relative to the fundamental: item 0 is harmonic 2, item 1 harmonic 3, ….</summary>
    public List<double> HarmonicAmplitudes { get; set; } = [];

    /// <summary>Affected channel labels; empty means all.</summary>
    public List<string> Channels { get; set; } = [];

    /// <summary>Switch-on time, s from the start. The default is 0.</summary>
    public double OnsetSeconds { get; set; }

    /// <summary>Switch-off time, s from the start; null means never.</summary>
    public double? OffsetSeconds { get; set; }

    /// <summary>
    /// Largest excursion of a slow random walk of the fundamental, Hz: a grid wanders (≈ ±0.05 Hz), a display's
    /// crystal does not (0). The default is 0.
    /// </summary>
    public double WanderHz { get; set; }

    public IReadOnlyList<string> Validate(string prefix, IReadOnlySet<string> labels)
    {
        var errors = new List<string>();
        if (!(FrequencyHz > 0) || !double.IsFinite(FrequencyHz))
        {
            errors.Add($"{prefix}.frequencyHz must be positive (got {FrequencyHz}).");
        }

        if (!(AmplitudeUvRms >= 0) || !double.IsFinite(AmplitudeUvRms))
        {
            errors.Add($"{prefix}.amplitudeUvRms must be zero or positive (got {AmplitudeUvRms}).");
        }

        if (!(WanderHz >= 0 && WanderHz < FrequencyHz))
        {
            errors.Add($"{prefix}.wanderHz must be zero or positive and below the frequency (got {WanderHz}).");
        }

        if (OffsetSeconds is { } off && !(off > OnsetSeconds))
        {
            errors.Add($"{prefix}.offsetSeconds must be after onsetSeconds (got {off} ≤ {OnsetSeconds}).");
        }

        foreach (var label in Channels)
        {
            if (!labels.Contains(label))
            {
                errors.Add($"{prefix}.channels: no channel '{label}' in the montage.");
            }
        }

        return errors;
    }
}

/// <summary>Kinds of simulated channel faults.</summary>
public enum SimulatedFaultKind
{
    /// <summary>The channel holds a constant value (<see cref="SimulatedFault.LevelUv"/>).</summary>
    Flat,

    /// <summary>
    /// The channel is amplified by <see cref="SimulatedFault.Gain"/> and saturates at ±<see cref="SimulatedFault.LevelUv"/>
    /// (the amplifier's rail, which may lie inside the declared range), or at the channel's range when LevelUv is 0.
    /// </summary>
    Clipped,

    /// <summary>The channel delivers NaN.</summary>
    NaNBurst,

    /// <summary>
    /// The electrode's offset drifts by <see cref="SimulatedFault.DriftUvPerSecond"/> from the onset and the amplifier
    /// saturates at ±<see cref="SimulatedFault.LevelUv"/> (or the channel's range when LevelUv is 0): the EEG rides up
    /// the ramp, touches the rail ever more often, then sits there.
    /// </summary>
    OffsetDrift,
}

/// <summary>A channel fault on the timeline.</summary>
public sealed class SimulatedFault
{
    public SimulatedFaultKind Kind { get; set; }

    /// <summary>Affected channel label.</summary>
    public string Channel { get; set; } = "";

    public double OnsetSeconds { get; set; }

    /// <summary>End, s; null means until the end.</summary>
    public double? OffsetSeconds { get; set; }

    /// <summary>
    /// Flat: the constant value; Clipped and OffsetDrift: the amplifier's rail ±LevelUv, even inside the channel's range.
    /// The default is 0 (flat at 0 µV; saturation at the channel's range, or ±200 µV without one).
    /// </summary>
    public double LevelUv { get; set; }

    /// <summary>Clipped: gain applied before saturation. The default is 50.</summary>
    public double Gain { get; set; } = 50;

    /// <summary>Flat: residual noise around the level, µV RMS (an input with nothing attached still shows a little amplifier noise). The default is 0.</summary>
    public double NoiseUvRms { get; set; }

    /// <summary>OffsetDrift: how fast the electrode's offset moves, µV/s (signed). The default is 100 µV/s.</summary>
    public double DriftUvPerSecond { get; set; } = 100;

    public IReadOnlyList<string> Validate(string prefix, IReadOnlySet<string> labels)
    {
        var errors = new List<string>();
        if (!labels.Contains(Channel))
        {
            errors.Add($"{prefix}.channel: no channel '{Channel}' in the montage.");
        }

        if (OffsetSeconds is { } off && !(off > OnsetSeconds))
        {
            errors.Add($"{prefix}.offsetSeconds must be after onsetSeconds (got {off} ≤ {OnsetSeconds}).");
        }

        if (!double.IsFinite(LevelUv) || !(Gain > 0))
        {
            errors.Add($"{prefix}: levelUv must be finite and gain positive (got {LevelUv}, {Gain}).");
        }

        if (!(NoiseUvRms >= 0) || !double.IsFinite(NoiseUvRms) || !double.IsFinite(DriftUvPerSecond))
        {
            errors.Add($"{prefix}: noiseUvRms must be zero or positive and driftUvPerSecond finite (got {NoiseUvRms}, {DriftUvPerSecond}).");
        }

        return errors;
    }
}
