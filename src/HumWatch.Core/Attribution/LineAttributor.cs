using System.Globalization;
using HumWatch.Core.Lines;

namespace HumWatch.Core.Attribution;

/// <summary>
/// Names the likely source of each line from the site's catalogue: mains h·f₀ (h = 1 … MainsMaxHarmonic), each display
/// rate r·h (h = 1 … DisplayMaxHarmonic) and the site's tones, every expected frequency folded below Nyquist as
/// f_a = |f − m·fs|, m = round(f/fs). Built once per stream; allocation-free per frame. Not thread-safe.
/// </summary>
/// <remarks>
/// <para>Mains: when a line lies within nominal ± tolerance, the strongest such line gives f̂₀ and harmonics are
/// expected at h·f̂₀ within a resolution-limited window (½ bin + h·0.1 bin, since f̂₀ is good to about 0.1 bin and the
/// error grows with h). Otherwise harmonics are expected at h·f₀ ± (h·tolerance + ½ bin). Displays: r·h ± (h·tolerance +
/// ½ bin); site tones likewise with their own tolerance.</para>
/// <para>Several explanations of one line are ranked, most likely first: (1) the source's fundamental is present in the
/// frame (a fundamental explains itself; for mains, f̂₀ was found); (2) the source explains more of the frame's other
/// lines (a grid that shows 50, 150 and 250 Hz is the better explanation for 100 Hz than a 100 Hz display seen nowhere
/// else); (3) mains whose fundamental was seen, the commonest line in EEG; (4) the lower harmonic; (5) the smaller
/// frequency error. The first becomes <see cref="FrameLine.Source"/>, the
/// rest <see cref="FrameLine.AlsoPossible"/>, but only those that fit about as well: another source (never a further
/// harmonic of the source already named), whose fundamental is present when the named one's is, and that the line's
/// evidence does not contradict.</para>
/// <para>Without a configured grid both 50 and 60 Hz families are candidates; the <see cref="Tracking.LineTracker"/>
/// decides the grid from the data and attributes again against it, with each line's <see cref="Tracking.GridLock"/>:
/// a line whose frequency follows n × the fundamental is that mains harmonic; one that holds its own frequency while the
/// grid wanders is not mains at all; one on other channels than the fundamental leans towards the other explanation.</para>
/// </remarks>
internal sealed class LineAttributor
{
    private const int MaxCandidatesPerLine = 16;
    private const int InitialLineCapacity = 32;
    private const double EstimatedFundamentalErrorBins = 0.1;

    private readonly Source[] _sources;
    private readonly int _mainsFamilies;
    private readonly double _sampleRateHz;
    private readonly double _nyquistHz;
    private readonly double _binWidthHz;
    private readonly double[] _mainsEstimateHz;
    private readonly double[] _mainsEstimateAmplitude;
    private readonly int[] _mainsFundamentalLine;
    private readonly bool[] _sourceActive;
    private readonly int[] _explainedLines;
    private readonly bool[] _fundamentalPresent;
    private readonly int[] _lastCountedLine;
    private Candidate[] _candidates = new Candidate[InitialLineCapacity * MaxCandidatesPerLine];
    private int[] _candidateCounts = new int[InitialLineCapacity];

    public LineAttributor(SourceCatalogOptions catalog, double sampleRateHz, double binWidthHz)
    {
        ArgumentNullException.ThrowIfNull(catalog);
        if (!(sampleRateHz > 0) || !double.IsFinite(sampleRateHz))
        {
            throw new ArgumentOutOfRangeException(nameof(sampleRateHz), sampleRateHz, "Sample rate must be a positive number of Hz.");
        }

        if (!(binWidthHz > 0) || !double.IsFinite(binWidthHz))
        {
            throw new ArgumentOutOfRangeException(nameof(binWidthHz), binWidthHz, "Resolution must be a positive number of Hz.");
        }

        var errors = catalog.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentException(string.Join(" ", errors), nameof(catalog));
        }

        _sampleRateHz = sampleRateHz;
        _nyquistHz = sampleRateHz / 2;
        _binWidthHz = binWidthHz;
        var sources = new List<Source>();
        foreach (var grid in catalog.CandidateGrids())
        {
            sources.Add(new Source(SourceKind.Mains, "mains", grid, grid * catalog.MainsTolerancePercent / 100, catalog.MainsMaxHarmonic));
        }

        _mainsFamilies = sources.Count;
        _mainsEstimateHz = new double[_mainsFamilies];
        _mainsEstimateAmplitude = new double[_mainsFamilies];
        _mainsFundamentalLine = new int[_mainsFamilies];
        foreach (var rate in catalog.DisplayRatesHz)
        {
            sources.Add(new Source(SourceKind.Display, "display " + rate.ToString("0.###", CultureInfo.InvariantCulture) + " Hz", rate, catalog.DisplayToleranceHz, catalog.DisplayMaxHarmonic));
        }

        foreach (var tone in catalog.SiteTones)
        {
            sources.Add(new Source(SourceKind.SiteTone, tone.Name, tone.FrequencyHz, tone.ToleranceHz, tone.MaxHarmonic));
        }

        _sources = [.. sources];
        _sourceActive = new bool[_sources.Length];
        _explainedLines = new int[_sources.Length];
        _fundamentalPresent = new bool[_sources.Length];
        _lastCountedLine = new int[_sources.Length];
    }

    /// <summary>
    /// Where a component at <paramref name="frequencyHz"/> appears when sampled at <paramref name="sampleRateHz"/>:
    /// |f − m·fs| with m = round(f/fs), in [0, fs/2].
    /// </summary>
    public static double Fold(double frequencyHz, double sampleRateHz)
    {
        var m = Math.Round(frequencyHz / sampleRateHz, MidpointRounding.AwayFromZero);
        return Math.Abs(frequencyHz - (m * sampleRateHz));
    }

    /// <summary>
    /// Sets Source and AlsoPossible on every line against every candidate grid (frame-local: the analyser's view);
    /// returns the mains frequency estimated from the strongest fundamental, or NaN.
    /// </summary>
    public double Attribute(ReadOnlySpan<FrameLine> lines) => Attribute(lines, double.NaN, default);

    /// <summary>
    /// Sets Source and AlsoPossible on every line. <paramref name="gridNominalHz"/> (when finite) keeps only that grid's
    /// mains family; <paramref name="locks"/> (empty, or one per line) is each line's evidence against the grid.
    /// Returns the grid's fundamental as estimated in this frame (the strongest fundamental when no grid is given), or NaN.
    /// </summary>
    public double Attribute(ReadOnlySpan<FrameLine> lines, double gridNominalHz, ReadOnlySpan<Tracking.GridLock> locks)
    {
        EnsureCapacity(lines.Length);
        var mainsHz = EstimateMains(lines, gridNominalHz);

        // Pass 1: every catalogued explanation of every line; count what each source explains.
        Array.Clear(_explainedLines);
        Array.Fill(_lastCountedLine, -1);
        for (var l = 0; l < lines.Length; l++)
        {
            lines[l].ClearSources();
            _candidateCounts[l] = CollectCandidates(lines[l].FrequencyHz, _candidates.AsSpan(l * MaxCandidatesPerLine, MaxCandidatesPerLine));
            for (var c = 0; c < _candidateCounts[l]; c++)
            {
                // A source counts once per line even when several of its harmonics fold onto it, and the grid's own
                // fundamental is no support for another source (a 60 Hz display would otherwise claim 60 Hz mains).
                var source = _candidates[(l * MaxCandidatesPerLine) + c].SourceIndex;
                if (_lastCountedLine[source] != l && (source < _mainsFamilies || !IsMainsFundamental(l)))
                {
                    _lastCountedLine[source] = l;
                    _explainedLines[source]++;
                }
            }
        }

        for (var s = 0; s < _sources.Length; s++)
        {
            _fundamentalPresent[s] = s < _mainsFamilies ? !double.IsNaN(_mainsEstimateHz[s]) : IsFundamentalPresent(s, lines);
        }

        // Pass 2: rank and write.
        for (var l = 0; l < lines.Length; l++)
        {
            var lineLock = l < locks.Length ? locks[l] : Tracking.GridLock.Unknown;
            var candidates = _candidates.AsSpan(l * MaxCandidatesPerLine, _candidateCounts[l]);
            var kept = 0;
            for (var c = 0; c < candidates.Length; c++)
            {
                var candidate = candidates[c] with
                {
                    FundamentalPresent = candidates[c].Match.Harmonic == 1 || _fundamentalPresent[candidates[c].SourceIndex],
                    Support = _explainedLines[candidates[c].SourceIndex] - 1,
                };
                candidate = candidate with { EvidenceRank = EvidenceRank(candidate, lineLock) };
                if (IsLoneDriftMatch(candidate) || candidate.EvidenceRank == RuledOut)
                {
                    continue;
                }

                candidates[kept++] = candidate;
            }

            candidates = candidates[..kept];

            NoAllocSort.Sort(candidates, default(ByLikelihood));
            if (candidates.Length == 0)
            {
                lines[l].Source = SourceMatch.None;
                continue;
            }

            var primary = candidates[0];
            lines[l].Source = primary.Match;
            for (var c = 1; c < candidates.Length; c++)
            {
                if (FitsAboutAsWell(candidates[c], primary))
                {
                    lines[l].AddAlternative(candidates[c].Match);
                }
            }
        }

        return mainsHz;
    }

    private const int Favoured = 0;
    private const int Neutral = 1;
    private const int Disfavoured = 2;
    private const int RuledOut = 3;

    // A mains harmonic (h ≥ 2) is what the grid lock speaks about; fundamentals and other sources are judged by it in reverse.
    private int EvidenceRank(Candidate candidate, Tracking.GridLock lineLock)
    {
        var mainsHarmonic = candidate.SourceIndex < _mainsFamilies && candidate.Match.Harmonic >= 2;
        return lineLock switch
        {
            Tracking.GridLock.FollowsGrid => mainsHarmonic ? Favoured : RuledOut,
            Tracking.GridLock.Independent => mainsHarmonic ? RuledOut : Favoured,
            Tracking.GridLock.ChannelsDiffer => mainsHarmonic ? Disfavoured : Neutral,
            _ => Neutral,
        };
    }

    /// <summary>
    /// An alternative worth showing: another source than the one named (its further harmonics folding onto the same line
    /// add nothing), not weaker on the fundamental test, and not put behind by the evidence.
    /// </summary>
    private static bool FitsAboutAsWell(Candidate alternative, Candidate primary) =>
        alternative.SourceIndex != primary.SourceIndex
        && (alternative.FundamentalPresent || !primary.FundamentalPresent)
        && alternative.EvidenceRank <= Math.Max(Neutral, primary.EvidenceRank);

    /// <summary>
    /// A harmonic whose fundamental is absent, that explains no other line of the frame, and that fits only thanks to
    /// the drift allowance (h × tolerance) is too weak to name: at high orders that allowance spans several hertz once
    /// folded (mains ×10 at fs = 256 Hz covers 7–17 Hz), and a biological rhythm would be called mains.
    /// </summary>
    private bool IsLoneDriftMatch(Candidate candidate)
    {
        if (candidate.Match.Harmonic == 1 || candidate.FundamentalPresent || candidate.Support > 0)
        {
            return false;
        }

        var resolutionWindow = (0.5 + (candidate.Match.Harmonic * EstimatedFundamentalErrorBins)) * _binWidthHz;
        return candidate.AbsErrorHz > resolutionWindow;
    }

    private double EstimateMains(ReadOnlySpan<FrameLine> lines, double gridNominalHz)
    {
        var best = double.NaN;
        var bestAmplitude = double.NegativeInfinity;
        for (var s = 0; s < _mainsFamilies; s++)
        {
            var nominal = _sources[s].NominalHz;
            _sourceActive[s] = double.IsNaN(gridNominalHz) || Math.Abs(nominal - gridNominalHz) < 1e-9;
            _mainsEstimateHz[s] = double.NaN;
            _mainsEstimateAmplitude[s] = double.NegativeInfinity;
            _mainsFundamentalLine[s] = -1;
            if (!_sourceActive[s])
            {
                continue;
            }

            var window = _sources[s].ToleranceHz + (0.5 * _binWidthHz);
            for (var l = 0; l < lines.Length; l++)
            {
                var unfolded = Unfold(lines[l].FrequencyHz, nominal);
                if (Math.Abs(unfolded - nominal) <= window && lines[l].AmplitudeUvRms > _mainsEstimateAmplitude[s])
                {
                    _mainsEstimateHz[s] = unfolded;
                    _mainsEstimateAmplitude[s] = lines[l].AmplitudeUvRms;
                    _mainsFundamentalLine[s] = l;
                }
            }

            if (_mainsEstimateAmplitude[s] > bestAmplitude)
            {
                best = _mainsEstimateHz[s];
                bestAmplitude = _mainsEstimateAmplitude[s];
            }
        }

        for (var s = _mainsFamilies; s < _sources.Length; s++)
        {
            _sourceActive[s] = true;
        }

        return best;
    }

    private int CollectCandidates(double observedHz, Span<Candidate> target)
    {
        var n = 0;
        for (var s = 0; s < _sources.Length && n < target.Length; s++)
        {
            if (!_sourceActive[s])
            {
                continue;
            }

            var source = _sources[s];
            var estimated = s < _mainsFamilies && !double.IsNaN(_mainsEstimateHz[s]);
            var fundamental = estimated ? _mainsEstimateHz[s] : source.NominalHz;
            for (var h = 1; h <= source.MaxHarmonic && n < target.Length; h++)
            {
                var expected = h * fundamental;
                var window = estimated
                    ? (0.5 + (h * EstimatedFundamentalErrorBins)) * _binWidthHz
                    : (h * source.ToleranceHz) + (0.5 * _binWidthHz);
                var unfolded = Unfold(observedHz, expected);
                if (Math.Abs(unfolded - expected) > window)
                {
                    continue;
                }

                var folded = Fold(expected, _sampleRateHz);
                // Aliased follows the nominal harmonic, so a line sitting on Nyquist does not flip with f̂₀'s last decimal.
                var match = new SourceMatch(source.Kind, source.Name, fundamental, h, h * source.NominalHz > _nyquistHz, folded, observedHz - folded);
                target[n++] = new Candidate(match, s, false, 0, Math.Abs(unfolded - expected), Neutral, s < _mainsFamilies);
            }
        }

        return n;
    }

    private bool IsFundamentalPresent(int sourceIndex, ReadOnlySpan<FrameLine> lines)
    {
        var source = _sources[sourceIndex];
        var window = source.ToleranceHz + (0.5 * _binWidthHz);
        for (var l = 0; l < lines.Length; l++)
        {
            if (!IsMainsFundamental(l) && Math.Abs(Unfold(lines[l].FrequencyHz, source.NominalHz) - source.NominalHz) <= window)
            {
                return true;
            }
        }

        return false;
    }

    private bool IsMainsFundamental(int line)
    {
        for (var s = 0; s < _mainsFamilies; s++)
        {
            if (_mainsFundamentalLine[s] == line)
            {
                return true;
            }
        }

        return false;
    }

    // The frequency before sampling nearest to `near` that folds to `observedHz`: m·fs ± observed, m = round(near/fs).
    private double Unfold(double observedHz, double near)
    {
        var m = Math.Round(near / _sampleRateHz, MidpointRounding.AwayFromZero) * _sampleRateHz;
        var plus = m + observedHz;
        var minus = m - observedHz;
        return Math.Abs(plus - near) <= Math.Abs(minus - near) ? plus : minus;
    }

    private void EnsureCapacity(int lineCount)
    {
        // Room for a typical frame up front, then doubling (bounded by the line pool): a frame with one line more than
        // any before must not allocate again, so steady state allocates nothing.
        if (_candidateCounts.Length < lineCount)
        {
            var capacity = Math.Max(lineCount, Math.Max(InitialLineCapacity, 2 * _candidateCounts.Length));
            _candidateCounts = new int[capacity];
            _candidates = new Candidate[capacity * MaxCandidatesPerLine];
        }
    }

    private sealed record Source(SourceKind Kind, string Name, double NominalHz, double ToleranceHz, int MaxHarmonic);

    private readonly record struct Candidate(SourceMatch Match, int SourceIndex, bool FundamentalPresent, int Support, double AbsErrorHz, int EvidenceRank, bool IsMains)
    {
        // Mains whose fundamental was seen (f̂₀ estimated): grid pickup is the commonest line in EEG (common practice, no source).
        public bool AnchoredMains => IsMains && FundamentalPresent;
    }

    private readonly struct ByLikelihood : IComparer<Candidate>
    {
        public int Compare(Candidate x, Candidate y)
        {
            if (x.EvidenceRank != y.EvidenceRank)
            {
                return x.EvidenceRank.CompareTo(y.EvidenceRank);
            }

            if (x.FundamentalPresent != y.FundamentalPresent)
            {
                return x.FundamentalPresent ? -1 : 1;
            }

            if (x.Support != y.Support)
            {
                return y.Support.CompareTo(x.Support);
            }

            if (x.AnchoredMains != y.AnchoredMains)
            {
                return x.AnchoredMains ? -1 : 1;
            }

            if (x.Match.Harmonic != y.Match.Harmonic)
            {
                return x.Match.Harmonic.CompareTo(y.Match.Harmonic);
            }

            return x.AbsErrorHz.CompareTo(y.AbsErrorHz);
        }
    }
}
