namespace HumWatch.Simulation;

/// <summary>Seeded random numbers for one channel or tone: uniform drivers and Box–Muller Gaussians.</summary>
internal sealed class NoiseSource
{
    private static readonly double Sqrt3 = Math.Sqrt(3);
    private readonly Random _random;
    private double _spare;
    private bool _hasSpare;

    public NoiseSource(int seed)
    {
        _random = new Random(seed);
    }

    /// <summary>Zero-mean, unit-variance uniform value; cheap driver for filters whose output is near-Gaussian anyway.</summary>
    public double Uniform() => ((2 * _random.NextDouble()) - 1) * Sqrt3;

    /// <summary>Uniform in [0, 1).</summary>
    public double Unit() => _random.NextDouble();

    /// <summary>Standard normal value (Box–Muller, both outputs used).</summary>
    public double Gaussian()
    {
        if (_hasSpare)
        {
            _hasSpare = false;
            return _spare;
        }

        double u;
        do
        {
            u = _random.NextDouble();
        }
        while (u <= double.Epsilon);

        var radius = Math.Sqrt(-2 * Math.Log(u));
        var angle = 2 * Math.PI * _random.NextDouble();
        _spare = radius * Math.Sin(angle);
        _hasSpare = true;
        return radius * Math.Cos(angle);
    }

    /// <summary>Mixes a scenario seed with a stream number into an independent seed (SplitMix64 finaliser).</summary>
    public static int DeriveSeed(int seed, int stream, int salt)
    {
        unchecked
        {
            var z = ((ulong)(uint)seed << 32) ^ ((ulong)(uint)stream * 0x9E3779B97F4A7C15UL) ^ ((ulong)(uint)salt << 17);
            z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
            z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
            z ^= z >> 31;
            return (int)(z & 0x7FFFFFFF);
        }
    }
}
