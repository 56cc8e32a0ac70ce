using System.Numerics;
using HumWatch.Core.Analysis;
using HumWatch.Core.Attribution;
using HumWatch.Core.Lines;

namespace HumWatch.Core.Tracking;

/// <summary>
/// Follows lines from frame to frame and explains them by what the data shows, then hands each frame on. It gives every
/// line an identity (<see cref="FrameLine.TrackId"/>) and decides its persistence — the one definition of "the same line"
/// that alerts, the ledger, the day spectra and `check` all use —, decides the grid (50 or 60 Hz) from the data when the
/// configuration does not fix it, tests each possible mains harmonic against n × the measured fundamental, and
/// attributes the frame's lines again with that evidence (<see cref="FrameLine.Evidence"/>).
/// </summary>
/// <remarks>
/// <para>Frames must arrive in recording order, one tracker per stream session; its state outlives a span by design,
/// so it sits after the analysis (which keeps frames functions of their span) and before every consumer.</para>
/// <para>Grid: a frame votes for a nominal grid when a line within its tolerance window (EN 50160: ±1 % for 50 Hz
/// systems) carries at least half of the analysed channels, with a bonus for each of its 2nd–5th harmonics present.
/// Without a configured grid the first to lead by two to one, with at least <see cref="DecisionVotes"/>, is taken and
/// kept. With one configured, the data is still scored: when the configured fundamental never showed and the other
/// grid's did in <see cref="ConflictVotes"/> votes, the frame says so (<see cref="AnalysisFrame.GridConflictHz"/>).</para>
/// <para>Grid lock: the grid wanders by hundredths of a hertz over minutes while a display's refresh is crystal-steady.
/// Over the frames a line shares with the fundamental, its (unfolded) frequency u is compared with n·f₀ by two
/// residual sums: RSS_lock = Σ((u − ū) − n(f₀ − f̄₀))² and RSS_own = Σ(u − ū)². One that is four times the other
/// (after a noise allowance of (1 mHz)² per frame) decides, once n × the fundamental has moved by at least 6 mHz
/// (standard deviation); a grid too steady to tell leaves it open, and then a line
/// on other channels than the fundamental (mean Jaccard overlap ≤ 0.35, at most half its share) leans away from mains.</para>
/// Not thread-safe; allocation-free in steady state (pools grow with the most lines and tracks seen so far).
/// </remarks>
public sealed class LineTracker : IAnalysisFrameSink
{
    /// <summary>Grid votes needed before a grid is taken as measured.</summary>
    public const double DecisionVotes = 2;

    /// <summary>Votes for the other grid, with none for the configured one, before the setting is called into question.</summary>
    public const double ConflictVotes = 5;

    private const double MatchWidthBins = 1.5;
    private const double MinGridShare = 0.5;
    private const int GridHarmonicsScored = 5;
    private const double LockRatio = 4;
    private const double FrequencyNoiseHz = 0.001;

    // n × the fundamental must move by at least this (standard deviation) before its track can speak: below it, what
    // moves is the estimates' own noise, not the grid (a grid wanders by hundredths of a hertz; common practice, no source).
    private const double MinGridSpreadHz = 0.006;
    private const double DifferentChannelsOverlap = 0.35;
    private const double EstimatedFundamentalErrorBins = 0.1;

    private readonly AnalysisOptions _options;
    private readonly IAnalysisFrameSink? _next;
    private readonly int _persistFrames;
    private readonly int _window;
    private readonly int _minShared;
    private readonly double[] _gridsHz;
    private readonly double[] _gridVotes;
    private readonly bool _gridConfigured;
    private readonly double[] _fundamentalHz;
    private readonly long[] _fundamentalFrame;
    private LineAttributor? _attributor;
    private double _binWidthHz;
    private double _sampleRateHz;
    private int _mergeFrames;
    private LineTrack[] _tracks = [];
    private int _trackCount;
    private int _nextTrackId;
    private int[] _lineTrack = [];
    private GridLock[] _locks = [];
    private long _frameNumber;
    private double _gridHz = double.NaN;

    /// <param name="options">The stream's analysis settings (the catalogue and <see cref="AnalysisOptions.Tracking"/>).</param>
    /// <param name="next">Where <see cref="OnFrame"/> hands frames once tracked; null when the owner calls <see cref="Track"/> and fans out itself.</param>
    public LineTracker(AnalysisOptions options, IAnalysisFrameSink? next = null)
    {
        ArgumentNullException.ThrowIfNull(options);
        var errors = options.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentException("Invalid analysis options: " + string.Join(" ", errors), nameof(options));
        }

        _options = options;
        _next = next;
        _persistFrames = options.Tracking.PersistFrames;
        _window = options.Tracking.EvidenceFrames;
        _minShared = options.Tracking.MinSharedFrames;
        _gridConfigured = options.Sources.MainsHz is not null;
        _gridsHz = _gridConfigured
            ? [options.Sources.MainsHz!.Value, .. SourceCatalogOptions.WorldGridsHz.Where(g => Math.Abs(g - options.Sources.MainsHz!.Value) > 1e-9)]
            : [.. SourceCatalogOptions.WorldGridsHz];
        _gridVotes = new double[_gridsHz.Length];
        if (_gridConfigured)
        {
            _gridHz = _gridsHz[0];
        }

        _fundamentalHz = new double[_window];
        _fundamentalFrame = new long[_window];
        Array.Fill(_fundamentalFrame, -1);
    }

    /// <summary>The grid lines are attributed against: configured, measured, or NaN while unknown.</summary>
    public double GridNominalHz => _gridHz;

    public GridOrigin GridFrom => _gridConfigured ? GridOrigin.Configured : double.IsNaN(_gridHz) ? GridOrigin.Unknown : GridOrigin.Measured;

    public void OnFrame(AnalysisFrame frame)
    {
        ArgumentNullException.ThrowIfNull(frame);
        Track(frame);
        _next?.OnFrame(frame);
    }

    /// <summary>Tracks and re-attributes the frame's lines in place, without handing the frame on.</summary>
    public void Track(AnalysisFrame frame)
    {
        ArgumentNullException.ThrowIfNull(frame);
        EnsureInitialised(frame);
        _frameNumber++;
        var lines = frame.Lines;
        EnsureLineCapacity(lines.Length);
        ExpireTracks();
        MatchTracks(lines);
        VoteGrid(lines);

        var fundamental = FindFundamental(lines);
        var f0 = fundamental >= 0 ? Unfold(lines[fundamental].FrequencyHz, _gridHz) : double.NaN;
        var slot = (int)(_frameNumber % _window);
        _fundamentalFrame[slot] = fundamental >= 0 ? _frameNumber : -1;
        _fundamentalHz[slot] = f0;

        var reference = double.IsNaN(f0) ? LastFundamentalHz() : f0;
        for (var l = 0; l < lines.Length; l++)
        {
            _locks[l] = l == fundamental ? GridLock.Unknown : Judge(lines, l, fundamental, reference);
        }

        var mains = _attributor!.Attribute(lines, _gridHz, _locks.AsSpan(0, lines.Length));
        frame.EstimatedMainsHz = mains;
        frame.GridNominalHz = _gridHz;
        frame.GridFrom = GridFrom;
        frame.GridConflictHz = GridConflict();
        for (var l = 0; l < lines.Length; l++)
        {
            var track = _tracks[_lineTrack[l]];
            var line = lines[l];
            var gridFundamental = l == fundamental && line.ChannelShare >= MinGridShare;
            if (gridFundamental)
            {
                // The grid's fundamental on most channels with the grid decided: a display at the same rate on every
                // channel is no explanation that fits about as well.
                line.ClearAlternatives();
            }

            line.TrackId = track.Id;
            line.TrackRunFrames = track.Run;
            line.IsPersistent = track.Persistent;
            line.Evidence = EvidenceOf(line, track, gridFundamental);
        }
    }

    private void EnsureInitialised(AnalysisFrame frame)
    {
        if (_attributor is not null)
        {
            if (frame.BinWidthHz != _binWidthHz || frame.Layout.SampleRateHz != _sampleRateHz)
            {
                throw new ArgumentException($"Frame resolution {frame.BinWidthHz} Hz at {frame.Layout.SampleRateHz} Hz differs from the stream's ({_binWidthHz} Hz at {_sampleRateHz} Hz); start a new tracker for a new layout.", nameof(frame));
            }

            return;
        }

        _binWidthHz = frame.BinWidthHz;
        _sampleRateHz = frame.Layout.SampleRateHz;
        _attributor = new LineAttributor(_options.Sources, _sampleRateHz, _binWidthHz);

        // A line absent for up to a whole span is the same line when it returns (one missed frame is not a new episode).
        var hop = Math.Max(1e-9, _options.Spectra.HopSeconds);
        _mergeFrames = Math.Max(1, (int)Math.Round(_options.Spectra.SpanSeconds / hop));
    }

    private void EnsureLineCapacity(int count)
    {
        if (_lineTrack.Length < count)
        {
            var capacity = Math.Max(count, Math.Max(32, 2 * _lineTrack.Length));
            _lineTrack = new int[capacity];
            _locks = new GridLock[capacity];
        }
    }

    private void ExpireTracks()
    {
        for (var t = 0; t < _trackCount; t++)
        {
            var track = _tracks[t];
            if (track.Active && _frameNumber - track.LastFrame > _mergeFrames)
            {
                track.Active = false;
            }
        }
    }

    // Strongest lines first take the nearest track still free in this frame; what is left starts a track.
    private void MatchTracks(ReadOnlySpan<FrameLine> lines)
    {
        var width = MatchWidthBins * _binWidthHz;
        for (var l = 0; l < lines.Length; l++)
        {
            var frequency = lines[l].FrequencyHz;
            var best = -1;
            var bestDistance = double.MaxValue;
            for (var t = 0; t < _trackCount; t++)
            {
                var track = _tracks[t];
                if (!track.Active || track.LastFrame == _frameNumber)
                {
                    continue;
                }

                var distance = Math.Abs(track.LastHz - frequency);
                if (distance <= width && distance < bestDistance)
                {
                    best = t;
                    bestDistance = distance;
                }
            }

            if (best < 0)
            {
                best = StartTrack();
            }

            _tracks[best].See(_frameNumber, frequency, _persistFrames);
            _lineTrack[l] = best;
        }
    }

    private int StartTrack()
    {
        for (var t = 0; t < _trackCount; t++)
        {
            if (!_tracks[t].Active)
            {
                _tracks[t].Reset(++_nextTrackId);
                return t;
            }
        }

        if (_trackCount == _tracks.Length)
        {
            Array.Resize(ref _tracks, Math.Max(32, 2 * _tracks.Length));
        }

        _tracks[_trackCount] = new LineTrack(_window);
        _tracks[_trackCount].Reset(++_nextTrackId);
        return _trackCount++;
    }

    private void VoteGrid(ReadOnlySpan<FrameLine> lines)
    {
        for (var g = 0; g < _gridsHz.Length; g++)
        {
            var nominal = _gridsHz[g];
            var best = BestNear(lines, nominal, (nominal * _options.Sources.MainsTolerancePercent / 100) + (0.5 * _binWidthHz));
            if (best < 0 || lines[best].ChannelShare < MinGridShare)
            {
                continue;
            }

            var f0 = Unfold(lines[best].FrequencyHz, nominal);
            var harmonics = 0;
            for (var h = 2; h <= Math.Min(GridHarmonicsScored, _options.Sources.MainsMaxHarmonic); h++)
            {
                var expected = LineAttributor.Fold(h * f0, _sampleRateHz);
                if (BestNear(lines, expected, (0.5 + (h * EstimatedFundamentalErrorBins)) * _binWidthHz, unfold: false) >= 0)
                {
                    harmonics++;
                }
            }

            _gridVotes[g] += 1 + (0.5 * Math.Min(harmonics, 2));
        }

        if (_gridConfigured || !double.IsNaN(_gridHz))
        {
            return;
        }

        var leader = _gridVotes[0] >= _gridVotes[1] ? 0 : 1;
        var other = 1 - leader;
        if (_gridVotes[leader] >= DecisionVotes && _gridVotes[leader] >= 2 * _gridVotes[other])
        {
            _gridHz = _gridsHz[leader];
        }
    }

    private double GridConflict()
    {
        if (!_gridConfigured || _gridVotes[0] > 0)
        {
            return double.NaN;
        }

        for (var g = 1; g < _gridsHz.Length; g++)
        {
            if (_gridVotes[g] >= ConflictVotes)
            {
                return _gridsHz[g];
            }
        }

        return double.NaN;
    }

    private int FindFundamental(ReadOnlySpan<FrameLine> lines) =>
        double.IsNaN(_gridHz) ? -1 : BestNear(lines, _gridHz, (_gridHz * _options.Sources.MainsTolerancePercent / 100) + (0.5 * _binWidthHz));

    // The strongest line within `window` of `targetHz` (unfolded around it, so a fundamental above Nyquist still counts), or −1.
    private int BestNear(ReadOnlySpan<FrameLine> lines, double targetHz, double window, bool unfold = true)
    {
        var best = -1;
        for (var l = 0; l < lines.Length; l++)
        {
            var frequency = unfold ? Unfold(lines[l].FrequencyHz, targetHz) : lines[l].FrequencyHz;
            if (Math.Abs(frequency - targetHz) <= window && (best < 0 || lines[l].AmplitudeUvRms > lines[best].AmplitudeUvRms))
            {
                best = l;
            }
        }

        return best;
    }

    private double LastFundamentalHz()
    {
        for (var back = 0; back < _window; back++)
        {
            var frame = _frameNumber - back;
            var slot = (int)(frame % _window);
            if (frame > 0 && _fundamentalFrame[slot] == frame)
            {
                return _fundamentalHz[slot];
            }
        }

        return double.NaN;
    }

    private GridLock Judge(ReadOnlySpan<FrameLine> lines, int index, int fundamental, double f0)
    {
        var track = _tracks[_lineTrack[index]];
        track.Harmonic = 0;
        if (double.IsNaN(f0))
        {
            return track.Lock;
        }

        var line = lines[index];
        var harmonic = HarmonicOf(line.FrequencyHz, f0);
        if (harmonic < 2)
        {
            return GridLock.Unknown;
        }

        track.Harmonic = harmonic;
        if (fundamental >= 0)
        {
            track.AddOverlap(Jaccard(line, lines[fundamental]));
        }

        var verdict = CompareTracks(track, harmonic);
        if (verdict is GridLock.FollowsGrid or GridLock.Independent)
        {
            track.Lock = verdict;
        }
        else if (track.Lock is not (GridLock.FollowsGrid or GridLock.Independent))
        {
            var fundamentalShare = fundamental >= 0 ? lines[fundamental].ChannelShare : 1;
            track.Lock = track.OverlapCount >= _persistFrames
                && track.MeanOverlap <= DifferentChannelsOverlap
                && line.ChannelShare <= 0.5 * fundamentalShare
                ? GridLock.ChannelsDiffer
                : GridLock.Unknown;
        }

        return track.Lock;
    }

    // The harmonic n whose folded n·f₀ lies within the attributor's resolution window of the line, or 0.
    private int HarmonicOf(double observedHz, double f0)
    {
        var best = 0;
        var bestError = double.MaxValue;
        for (var h = 2; h <= _options.Sources.MainsMaxHarmonic; h++)
        {
            var expected = h * f0;
            var error = Math.Abs(Unfold(observedHz, expected) - expected);
            if (error <= (0.5 + (h * EstimatedFundamentalErrorBins)) * _binWidthHz && error < bestError)
            {
                best = h;
                bestError = error;
            }
        }

        return best;
    }

    private GridLock CompareTracks(LineTrack track, int harmonic)
    {
        // Sums over the frames the line shares with the fundamental, centred on their means.
        var n = 0;
        double sumX = 0, sumU = 0;
        for (var i = 0; i < track.Count; i++)
        {
            if (TryPair(track, i, harmonic, out var x, out var u))
            {
                n++;
                sumX += x;
                sumU += u;
            }
        }

        track.SharedFrames = n;
        if (n < 2)
        {
            track.ClearFit();
            return GridLock.Unknown;
        }

        var meanX = sumX / n;
        var meanU = sumU / n;
        double sxx = 0, suu = 0, sxu = 0;
        for (var i = 0; i < track.Count; i++)
        {
            if (TryPair(track, i, harmonic, out var x, out var u))
            {
                var dx = x - meanX;
                var du = u - meanU;
                sxx += dx * dx;
                suu += du * du;
                sxu += dx * du;
            }
        }

        track.FollowRatio = sxx > 0 ? sxu / sxx / harmonic : double.NaN;
        track.SpreadHz = Math.Sqrt(suu / (n - 1));
        track.GridSpreadHz = harmonic * Math.Sqrt(sxx / (n - 1));
        if (n < _minShared || !(track.GridSpreadHz >= MinGridSpreadHz))
        {
            return GridLock.Unknown;
        }

        var rssOwn = suu;
        var rssLock = suu - (2 * harmonic * sxu) + (harmonic * harmonic * sxx);
        var noise = n * FrequencyNoiseHz * FrequencyNoiseHz;
        if (rssOwn > LockRatio * (rssLock + noise))
        {
            return GridLock.FollowsGrid;
        }

        return rssLock > LockRatio * (rssOwn + noise) ? GridLock.Independent : GridLock.Unknown;
    }

    private bool TryPair(LineTrack track, int i, int harmonic, out double f0, out double unfolded)
    {
        var frame = track.FrameAt(i);
        var slot = (int)(frame % _window);
        if (_frameNumber - frame >= _window || _fundamentalFrame[slot] != frame)
        {
            f0 = unfolded = 0;
            return false;
        }

        f0 = _fundamentalHz[slot];
        unfolded = Unfold(track.HzAt(i), harmonic * f0);
        return true;
    }

    private static LineEvidence EvidenceOf(FrameLine line, LineTrack track, bool isFundamental)
    {
        if (isFundamental)
        {
            return LineEvidence.None with { Basis = EvidenceBasis.GridFundamental, FrequencySpreadHz = track.OwnSpreadHz() };
        }

        if (track.Harmonic < 2)
        {
            return LineEvidence.None with { FrequencySpreadHz = track.OwnSpreadHz() };
        }

        var basis = track.Lock switch
        {
            GridLock.FollowsGrid or GridLock.Independent => EvidenceBasis.FrequencyTrack,
            GridLock.ChannelsDiffer => EvidenceBasis.ChannelPattern,
            _ => line.AlsoPossible.Length > 0 ? EvidenceBasis.Undecided : EvidenceBasis.Catalogue,
        };
        return new LineEvidence(basis, track.Lock, track.FollowRatio, track.OverlapCount > 0 ? track.MeanOverlap : double.NaN, track.SharedFrames >= 2 ? track.SpreadHz : track.OwnSpreadHz(), track.GridSpreadHz, track.SharedFrames);
    }

    private static double Jaccard(FrameLine a, FrameLine b)
    {
        var ma = a.ChannelMask;
        var mb = b.ChannelMask;
        if (ma.Length == 0 || ma.Length != mb.Length)
        {
            return double.NaN;
        }

        int both = 0, either = 0;
        for (var i = 0; i < ma.Length; i++)
        {
            both += BitOperations.PopCount(ma[i] & mb[i]);
            either += BitOperations.PopCount(ma[i] | mb[i]);
        }

        return either == 0 ? double.NaN : (double)both / either;
    }

    // The frequency before sampling nearest to `near` that folds to `observedHz`: m·fs ± observed, m = round(near/fs).
    private double Unfold(double observedHz, double near)
    {
        var m = Math.Round(near / _sampleRateHz, MidpointRounding.AwayFromZero) * _sampleRateHz;
        var plus = m + observedHz;
        var minus = m - observedHz;
        return Math.Abs(plus - near) <= Math.Abs(minus - near) ? plus : minus;
    }

    /// <summary>One followed line: identity, run, a ring of its recent frequencies, and its grid evidence.</summary>
    private sealed class LineTrack(int window)
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
}
