namespace HumWatch.Core.Tracking;

/// <summary>One followed line: identity, run, a ring of its recent frequencies, and its grid evidence.</summary>
internal sealed class LineTrack(int window)
{
    private readonly double[] _hz = new double[window];
    private readonly long[] _frame = new long[window];
    private int _head;
    private double _overlapSum;

    public int Id { get; private set; }

    public bool Active { get; set; }

    public long LastFrame { get; private set; }

    public double LastHz { get; private set; }

    public int Run { get; private set; }

    /// <summary>Reached the persistence run once; stays so while the track lives (a missed frame is the same line).</summary>
    public bool Persistent { get; private set; }

    public int Count { get; private set; }

    public int Harmonic { get; set; }

    public GridLock Lock { get; set; }

    public double FollowRatio { get; set; } = double.NaN;

    public double SpreadHz { get; set; } = double.NaN;

    public double GridSpreadHz { get; set; } = double.NaN;

    public int SharedFrames { get; set; }

    public int OverlapCount { get; private set; }

    public double MeanOverlap => OverlapCount == 0 ? double.NaN : _overlapSum / OverlapCount;

    public void Reset(int id)
    {
        Id = id;
        Active = true;
        LastFrame = 0;
        Run = 0;
        Persistent = false;
        Count = 0;
        _head = 0;
        Harmonic = 0;
        Lock = GridLock.Unknown;
        OverlapCount = 0;
        _overlapSum = 0;
        SharedFrames = 0;
        ClearFit();
    }

    public void ClearFit()
    {
        FollowRatio = double.NaN;
        SpreadHz = double.NaN;
        GridSpreadHz = double.NaN;
    }

    public void See(long frame, double frequencyHz, int persistFrames)
    {
        Run = LastFrame == frame - 1 ? Run + 1 : 1;
        Persistent |= Run >= persistFrames;
        LastFrame = frame;
        LastHz = frequencyHz;
        _hz[_head] = frequencyHz;
        _frame[_head] = frame;
        _head = (_head + 1) % _hz.Length;
        Count = Math.Min(Count + 1, _hz.Length);
    }

    public void AddOverlap(double jaccard)
    {
        if (!double.IsNaN(jaccard))
        {
            _overlapSum += jaccard;
            OverlapCount++;
        }
    }

    public long FrameAt(int i) => _frame[Index(i)];

    public double HzAt(int i) => _hz[Index(i)];

    public double OwnSpreadHz()
    {
        if (Count < 2)
        {
            return double.NaN;
        }

        double sum = 0;
        for (var i = 0; i < Count; i++)
        {
            sum += HzAt(i);
        }

        var mean = sum / Count;
        double squares = 0;
        for (var i = 0; i < Count; i++)
        {
            var d = HzAt(i) - mean;
            squares += d * d;
        }

        return Math.Sqrt(squares / (Count - 1));
    }

    // Oldest first.
    private int Index(int i) => (_head - Count + i + _hz.Length) % _hz.Length;
}
