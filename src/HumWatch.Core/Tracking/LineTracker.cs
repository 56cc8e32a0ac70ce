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
public sealed partial class LineTracker : IAnalysisFrameSink
{
    /// <summary>Grid votes needed before a grid is taken as measured.</summary>
    public const double DecisionVotes = 2;

    /// <summary>Votes for the other grid, with none for the configured one, before the setting is called into question.</summary>
    public const double ConflictVotes = 5;

    private const double MatchWidthBins = 1.5;
    private const double MinGridShare = 0.5;
    private const int GridHarmonicsScored = 5;
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

    // The frequency before sampling nearest to `near` that folds to `observedHz`: m·fs ± observed, m = round(near/fs).
    private double Unfold(double observedHz, double near)
    {
        var m = Math.Round(near / _sampleRateHz, MidpointRounding.AwayFromZero) * _sampleRateHz;
        var plus = m + observedHz;
        var minus = m - observedHz;
        return Math.Abs(plus - near) <= Math.Abs(minus - near) ? plus : minus;
    }
}
