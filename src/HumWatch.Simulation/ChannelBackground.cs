namespace HumWatch.Simulation;

/// <summary>
/// Background of one channel: 1/f background, amplitude-modulated alpha, beta, intermittent muscle bursts and
/// amplifier white noise. Filters are designed once; per sample it costs a handful of multiply-adds.
/// </summary>
internal sealed class ChannelBackground
{
    private readonly NoiseSource _noise;
    private readonly Biquad[] _pink;
    private readonly Biquad _alpha;
    private readonly Biquad _beta;
    private readonly Biquad? _muscleHigh;
    private readonly Biquad? _muscleLow;
    private readonly double _pinkScale;
    private readonly double _alphaScale;
    private readonly double _betaScale;
    private readonly double _muscleScale;
    private readonly double _amplifierUvRms;
    private readonly double _alphaModulationRadPerSample;
    private readonly double _alphaModulationPhase;
    private readonly double _sampleRateHz;
    private readonly double _burstsPerSample;
    private long _burstStart;
    private long _burstEnd;

    public ChannelBackground(BackgroundModel model, int seed, bool posterior, bool muscle)
    {
        _noise = new NoiseSource(seed);
        _sampleRateHz = model.SampleRateHz;
        _pink = new Biquad[model.Pink.Length];
        for (var i = 0; i < _pink.Length; i++)
        {
            _pink[i] = model.Pink[i].Clone();
        }

        // Each channel's alpha peak sits up to ±0.5 Hz from the nominal centre, so channels differ as they do on a scalp.
        var alphaHz = model.Settings.AlphaHz + (_noise.Unit() - 0.5);
        _alpha = Biquad.BandPass(_sampleRateHz, alphaHz, model.Settings.AlphaBandwidthHz);
        _beta = model.Beta.Clone();
        var alphaGain = Biquad.WhiteNoiseGain([_alpha], model.ImpulseLength);
        _pinkScale = model.Settings.PinkUvRms / model.PinkGain;
        _alphaScale = model.Settings.AlphaUvRms * (posterior ? 1.0 : 1.0 / 3) / alphaGain / AlphaEnvelopeRms;
        _betaScale = model.Settings.BetaUvRms / model.BetaGain;
        _amplifierUvRms = model.Settings.AmplifierNoiseUvRms;
        var modulationHz = 0.05 + (0.15 * _noise.Unit());
        _alphaModulationRadPerSample = 2 * Math.PI * modulationHz / _sampleRateHz;
        _alphaModulationPhase = 2 * Math.PI * _noise.Unit();
        if (muscle && model.Settings.MuscleUvRms > 0 && model.Settings.MuscleBurstsPerMinute > 0)
        {
            _muscleHigh = model.MuscleHigh.Clone();
            _muscleLow = model.MuscleLow.Clone();
            _muscleScale = model.Settings.MuscleUvRms / model.MuscleGain;
            _burstsPerSample = model.Settings.MuscleBurstsPerMinute / 60 / _sampleRateHz;
            ScheduleBurst(0);
        }
        else
        {
            _burstStart = long.MaxValue;
            _burstEnd = long.MaxValue;
        }
    }

    // RMS of the envelope 0.6 + 0.4·sin(·): √(0.36 + 0.08).
    private static double AlphaEnvelopeRms { get; } = Math.Sqrt(0.44);

    public void Generate(Span<float> target, long firstSample)
    {
        var pink = _pink;
        for (var i = 0; i < target.Length; i++)
        {
            var n = firstSample + i;
            var p = _noise.Uniform();
            for (var s = 0; s < pink.Length; s++)
            {
                p = pink[s].Process(p);
            }

            var envelope = 0.6 + (0.4 * Math.Sin((_alphaModulationRadPerSample * n) + _alphaModulationPhase));
            var value = (p * _pinkScale)
                + (_alpha.Process(_noise.Uniform()) * _alphaScale * envelope)
                + (_beta.Process(_noise.Uniform()) * _betaScale)
                + (_noise.Gaussian() * _amplifierUvRms);

            if (_muscleHigh is not null && _muscleLow is not null)
            {
                // The burst filters run all the time so a burst starts from settled state; only their output is gated.
                var m = _muscleLow.Process(_muscleHigh.Process(_noise.Uniform()));
                if (n >= _burstStart)
                {
                    if (n < _burstEnd)
                    {
                        var x = (double)(n - _burstStart) / (_burstEnd - _burstStart);
                        var window = Math.Sin(Math.PI * x);
                        value += m * _muscleScale * Math.Sqrt(2) * window;
                    }
                    else
                    {
                        ScheduleBurst(n);
                    }
                }
            }

            target[i] = (float)value;
        }
    }

    private void ScheduleBurst(long after)
    {
        // Poisson onsets; each burst lasts 0.3–2 s and is shaped by a half sine (mean square ½, hence √2 above).
        var waitSamples = -Math.Log(1 - _noise.Unit()) / _burstsPerSample;
        _burstStart = after + (long)waitSamples;
        _burstEnd = _burstStart + (long)((0.3 + (1.7 * _noise.Unit())) * _sampleRateHz) + 1;
    }
}

/// <summary>Filter designs and gains shared by all channels of a room.</summary>
internal sealed class BackgroundModel
{
    public BackgroundModel(BackgroundSettings settings, double sampleRateHz)
    {
        Settings = settings;
        SampleRateHz = sampleRateHz;
        ImpulseLength = (int)Math.Max(65536, 60 * sampleRateHz);

        // 1/f from 0.5 Hz up: shelves with poles two octaves apart and zeros one octave above each pole give
        // −3 dB/octave on average (ripple well under 1 dB).
        var sections = new List<Biquad>();
        for (var pole = 0.5; pole < 0.45 * sampleRateHz; pole *= 4)
        {
            sections.Add(Biquad.Shelf(sampleRateHz, pole, 2 * pole));
        }

        Pink = [.. sections];
        PinkGain = Biquad.WhiteNoiseGain(Pink, ImpulseLength);
        Beta = Biquad.BandPass(sampleRateHz, Math.Sqrt(15.0 * 30.0), 15);
        BetaGain = Biquad.WhiteNoiseGain([Beta], ImpulseLength);
        MuscleHigh = Biquad.HighPass(sampleRateHz, 20);
        MuscleLow = Biquad.LowPass(sampleRateHz, 150);
        MuscleGain = Biquad.WhiteNoiseGain([MuscleHigh, MuscleLow], ImpulseLength);
    }

    public BackgroundSettings Settings { get; }

    public double SampleRateHz { get; }

    public int ImpulseLength { get; }

    public Biquad[] Pink { get; }

    public double PinkGain { get; }

    public Biquad Beta { get; }

    public double BetaGain { get; }

    public Biquad MuscleHigh { get; }

    public Biquad MuscleLow { get; }

    public double MuscleGain { get; }
}
