namespace HumWatch.Simulation;

/// <summary>
/// One contamination tone with harmonics. The phase advances at the (possibly wandering) frequency and every
/// harmonic is evaluated as sin(h·φ) at the sample times, so harmonics above Nyquist fold exactly as a sampled
/// analogue tone would.
/// </summary>
internal sealed class ToneSource
{
    private const double TwoPi = 2 * Math.PI;
    private readonly NoiseSource _noise;
    private readonly double _sampleRateHz;
    private readonly double _frequencyHz;
    private readonly double _wanderHz;
    private readonly double _wanderStepHz;
    private readonly long _wanderInterval;
    private readonly long _onset;
    private readonly long _offset;
    private readonly double[] _peakAmplitudesUv;
    private readonly double[] _harmonicPhases;
    private double _phase;
    private double _wander;
    private long _next;

    public ToneSource(SimulatedTone tone, double sampleRateHz, int seed, bool[] channelMask)
    {
        _noise = new NoiseSource(seed);
        _sampleRateHz = sampleRateHz;
        _frequencyHz = tone.FrequencyHz;
        _wanderHz = tone.WanderHz;

        // The random walk moves every 0.1 s by a step whose size lets it roam the whole ±wander band within a minute or so.
        _wanderInterval = Math.Max(1, (long)Math.Round(0.1 * sampleRateHz));
        _wanderStepHz = 0.05 * _wanderHz;
        _onset = (long)Math.Round(tone.OnsetSeconds * sampleRateHz);
        _offset = tone.OffsetSeconds is { } off ? (long)Math.Round(off * sampleRateHz) : long.MaxValue;
        _peakAmplitudesUv = new double[1 + tone.HarmonicAmplitudes.Count];
        _harmonicPhases = new double[_peakAmplitudesUv.Length];
        for (var h = 0; h < _peakAmplitudesUv.Length; h++)
        {
            var relative = h == 0 ? 1.0 : tone.HarmonicAmplitudes[h - 1];
            _peakAmplitudesUv[h] = Math.Sqrt(2) * tone.AmplitudeUvRms * relative;
            _harmonicPhases[h] = TwoPi * _noise.Unit();
        }

        _phase = TwoPi * _noise.Unit();
        ChannelMask = channelMask;
    }

    /// <summary>Per channel: true when the tone reaches it.</summary>
    public bool[] ChannelMask { get; }

    /// <summary>True when [first, first + count) overlaps the tone's on-time.</summary>
    public bool IsOnWithin(long first, int count) => first < _offset && first + count > _onset;

    /// <summary>Writes the tone's samples (0 while off) and advances the phase; must be called for consecutive blocks.</summary>
    public void Generate(Span<double> target, long firstSample)
    {
        if (firstSample != _next)
        {
            throw new InvalidOperationException($"Tone samples must be generated in order (expected sample {_next}, got {firstSample}).");
        }

        var amplitudes = _peakAmplitudesUv;
        var phases = _harmonicPhases;
        for (var i = 0; i < target.Length; i++)
        {
            var n = firstSample + i;
            if (_wanderHz > 0 && n % _wanderInterval == 0)
            {
                // Reflect at the band edges so the walk stays within ±WanderHz.
                _wander += _wanderStepHz * _noise.Gaussian();
                if (_wander > _wanderHz)
                {
                    _wander = (2 * _wanderHz) - _wander;
                }
                else if (_wander < -_wanderHz)
                {
                    _wander = (-2 * _wanderHz) - _wander;
                }
            }

            var value = 0.0;
            if (n >= _onset && n < _offset)
            {
                for (var h = 0; h < amplitudes.Length; h++)
                {
                    value += amplitudes[h] * Math.Sin(((h + 1) * _phase) + phases[h]);
                }
            }

            target[i] = value;
            _phase += TwoPi * (_frequencyHz + _wander) / _sampleRateHz;
            if (_phase >= TwoPi)
            {
                _phase -= TwoPi * Math.Floor(_phase / TwoPi);
            }
        }

        _next = firstSample + target.Length;
    }
}
