using HumWatch.Core.Lines;

namespace HumWatch.Core.Tests.Lines;

/// <summary>
/// The plain one-bin-at-a-time line finder without the vector prefilter (same constants, same order of every operation,
/// same frequency interpolation and false-alarm probability), kept only as the reference the production
/// <see cref="LineFinder"/> must match bit for bit; a change to the scalar test is made in both.
/// </summary>
internal sealed class ScalarLineFinderReference
{
    /// <summary>Half-width of the Hann main lobe in bins.</summary>
    internal const int MainLobeBins = 2;

    /// <summary>Bins excluded from the floor on each side: main lobe plus one guard bin.</summary>
    internal const int GuardBins = MainLobeBins + 1;

    /// <summary>Farthest bin of the narrowness shoulder.</summary>
    internal const int ShoulderOuterBins = 4;

    /// <summary>Shoulder excess (bins 2…4 away, both sides) allowed relative to the peak bin's excess.</summary>
    internal const double MaxShoulderRatio = 0.25;

    private const int MinimumFlankBins = 6;

    // Farthest bin of the near level that bounds the floor from below.
    private const int NearOuterBins = 5;

    private readonly int _binCount;
    private readonly double _binWidthHz;
    private readonly int _minBin;
    private readonly int _maxBin;
    private readonly int _flankBins;
    private readonly double _minProminenceRatio;
    private readonly double _minProminenceDb;
    private readonly double _minAmplitudeUvRms;
    private readonly double _floorCorrection;
    private readonly LineSignificance _significance;
    private readonly double[] _scratch;
    private readonly ChannelPeak[] _kept;

    /// <param name="options">Search settings (validated by the caller).</param>
    /// <param name="binCount">One-sided bins of the PSD (segment length / 2 + 1), ≥ 16.</param>
    /// <param name="binWidthHz">Bin spacing, Hz.</param>
    /// <param name="degreesOfFreedom">Equivalent χ² degrees of freedom of a PSD bin (see <see cref="WelchStatistics"/>), ≥ 2.</param>
    /// <param name="binCorrelations">Correlation of PSD bins 1, 2, … apart; null for one Hann segment's.</param>
    public ScalarLineFinderReference(LineFinderOptions options, int binCount, double binWidthHz, double degreesOfFreedom, double[]? binCorrelations = null)
    {
        ArgumentNullException.ThrowIfNull(options);
        if (binCount < 16)
        {
            throw new ArgumentOutOfRangeException(nameof(binCount), binCount, "A PSD needs at least 16 bins for line finding.");
        }

        if (!(binWidthHz > 0) || !double.IsFinite(binWidthHz))
        {
            throw new ArgumentOutOfRangeException(nameof(binWidthHz), binWidthHz, "Bin width must be a positive number of Hz.");
        }

        if (!(degreesOfFreedom >= 2))
        {
            throw new ArgumentOutOfRangeException(nameof(degreesOfFreedom), degreesOfFreedom, "Degrees of freedom must be at least 2 (one periodogram).");
        }

        _binCount = binCount;
        _binWidthHz = binWidthHz;
        var last = binCount - 1;

        // Below the main lobe of DC the detrended segments leave little but drift; start past it.
        _minBin = Math.Max(GuardBins, (int)Math.Ceiling((options.MinFrequencyHz / binWidthHz) - 1e-9));
        _maxBin = options.MaxFrequencyHz > 0 ? Math.Min(last, (int)Math.Floor((options.MaxFrequencyHz / binWidthHz) + 1e-9)) : last;
        _flankBins = Math.Max(4, (int)Math.Round(options.FloorHalfWidthHz / binWidthHz));
        _minProminenceDb = options.MinProminenceDb;
        _minProminenceRatio = Math.Pow(10, options.MinProminenceDb / 10);
        _minAmplitudeUvRms = options.MinAmplitudeUvRms;
        _floorCorrection = 1 / WelchStatistics.MedianOfScaledChiSquare(degreesOfFreedom);
        _significance = new LineSignificance(degreesOfFreedom, binCorrelations ?? WelchStatistics.SingleSegmentHannBinCorrelations, _floorCorrection, _flankBins);
        _scratch = new double[2 * _flankBins];
        _kept = new ChannelPeak[options.MaxPeaksPerChannel];
    }

    /// <summary>Largest number of peaks <see cref="Find"/> returns.</summary>
    public int Capacity => _kept.Length;

    /// <summary>Bin spacing, Hz.</summary>
    public double BinWidthHz => _binWidthHz;

    /// <summary>Flanking bins per side used for the floor.</summary>
    public int FlankBins => _flankBins;

    /// <summary>Writes the lines of <paramref name="psd"/> into <paramref name="peaks"/>, largest amplitude first, and returns how many.</summary>
    public int Find(ReadOnlySpan<double> psd, Span<ChannelPeak> peaks)
    {
        if (psd.Length != _binCount)
        {
            throw new ArgumentException($"PSD must have {_binCount} bins (got {psd.Length}).", nameof(psd));
        }

        if (peaks.Length < _kept.Length)
        {
            throw new ArgumentException($"Peak buffer must hold {_kept.Length} peaks (got {peaks.Length}).", nameof(peaks));
        }

        var kept = 0;
        var last = _binCount - 1;
        for (var k = _minBin; k <= _maxBin; k++)
        {
            var p = psd[k];
            if (!(p > 0) || p < psd[k - 1] || (k < last && p <= psd[k + 1]))
            {
                continue;
            }

            // The level right beside the main lobe (bins 3…5 away, where a tone leaks < −31 dB) also bounds the floor: on
            // the slope of a strong rhythm the far flanks sit low, and a χ² fluctuation of the rhythm would otherwise pass.
            // It is cheap, so it goes first: most local maxima of noise fail against it and never need the median.
            var near = NearLevel(psd, k);
            if (p < near * _minProminenceRatio)
            {
                continue;
            }

            var median = LocalFloor.Median(psd, k, GuardBins, _flankBins, 2, MinimumFlankBins, _scratch);
            if (!(median > 0))
            {
                continue;
            }

            var floor = Math.Max(median * _floorCorrection, near);
            if (p < floor * _minProminenceRatio)
            {
                continue;
            }

            var excess = p - floor;
            if (!IsNarrow(psd, k, floor, excess))
            {
                continue;
            }

            var power = 0.0;
            for (var j = Math.Max(1, k - MainLobeBins); j <= Math.Min(last, k + MainLobeBins); j++)
            {
                power += psd[j] - floor;
            }

            var amplitude = Math.Sqrt(Math.Max(0, power * _binWidthHz));
            if (amplitude < _minAmplitudeUvRms)
            {
                continue;
            }

            var offset = InterpolateOffset(psd, k, median * _floorCorrection);
            var lowFlank = Math.Max(0, k - GuardBins - Math.Max(2, k - GuardBins - _flankBins));
            var highFlank = Math.Max(0, Math.Min(last, k + GuardBins + _flankBins) - k - GuardBins);
            var probability = _significance.BinProbability(p / floor, lowFlank, highFlank);
            var peak = new ChannelPeak(k, (k + offset) * _binWidthHz, amplitude, 10 * Math.Log10(p / floor), floor, probability);
            kept = Keep(peak, kept);
        }

        // Insertion sort by amplitude, largest first (at most MaxPeaksPerChannel entries).
        for (var i = 1; i < kept; i++)
        {
            var item = _kept[i];
            var j = i - 1;
            while (j >= 0 && _kept[j].AmplitudeUvRms < item.AmplitudeUvRms)
            {
                _kept[j + 1] = _kept[j];
                j--;
            }

            _kept[j + 1] = item;
        }

        _kept.AsSpan(0, kept).CopyTo(peaks);
        return kept;
    }

    /// <summary>The smallest prominence a kept peak has, dB.</summary>
    public double MinProminenceDb => _minProminenceDb;

    private double NearLevel(ReadOnlySpan<double> psd, int k)
    {
        var sum = 0.0;
        var count = 0;
        for (var d = GuardBins; d <= NearOuterBins; d++)
        {
            if (k - d >= 1)
            {
                sum += psd[k - d];
                count++;
            }

            if (k + d < _binCount)
            {
                sum += psd[k + d];
                count++;
            }
        }

        return count > 0 ? sum / count : 0;
    }

    private bool IsNarrow(ReadOnlySpan<double> psd, int k, double floor, double excess)
    {
        var shoulder = 0.0;
        for (var d = MainLobeBins; d <= ShoulderOuterBins; d++)
        {
            if (k - d >= 1)
            {
                shoulder += psd[k - d] - floor;
            }

            if (k + d < _binCount)
            {
                shoulder += psd[k + d] - floor;
            }
        }

        return shoulder <= MaxShoulderRatio * excess;
    }

    private double InterpolateOffset(ReadOnlySpan<double> psd, int k, double floor)
    {
        // Grandke's two-point Hann interpolation on magnitudes (T. Grandke, "Interpolation algorithms for discrete
        // Fourier transforms of weighted signals", IEEE Trans. Instrum. Meas. 32(2), 1983, 350–355): the Hann kernel's
        // magnitude is |W(d)| ∝ |sin πd| / |d(1 − d²)| at d bins from the tone, so with the tone δ bins above bin k the
        // larger neighbour's ratio α₊/α₀ = (1 + δ)/(2 − δ) gives δ = (2α₊ − α₀)/(α₀ + α₊) exactly (mirrored for the
        // lower neighbour). A Welch PSD of a steady tone is the mean over segments of |A·W|², the same shape in every
        // segment, so √(PSD − floor) has that shape too. Duda's three-point form 2(α₊ − α₋)/(α₋ + 2α₀ + α₊) is exact
        // as well but lets the noise of the far neighbour in: in white noise over 8 s frames it scattered ≈ 25 % more.
        // The floor is the median estimate (the near level may hold the tone's own leakage); bins pushed below it by
        // noise count as 0. At the last bin the spectrum continues as its mirror image about Nyquist: no offset.
        if (k + 1 >= _binCount)
        {
            return 0;
        }

        var centre = Math.Sqrt(Math.Max(psd[k] - floor, 0));
        var left = Math.Sqrt(Math.Max(psd[k - 1] - floor, 0));
        var right = Math.Sqrt(Math.Max(psd[k + 1] - floor, 0));
        if (!(centre > 0))
        {
            return 0;
        }

        var offset = right >= left ? ((2 * right) - centre) / (centre + right) : (centre - (2 * left)) / (centre + left);
        return Math.Clamp(offset, -1, 1);
    }

    private int Keep(ChannelPeak peak, int kept)
    {
        if (kept < _kept.Length)
        {
            _kept[kept] = peak;
            return kept + 1;
        }

        var weakest = 0;
        for (var i = 1; i < kept; i++)
        {
            if (_kept[i].AmplitudeUvRms < _kept[weakest].AmplitudeUvRms)
            {
                weakest = i;
            }
        }

        if (_kept[weakest].AmplitudeUvRms < peak.AmplitudeUvRms)
        {
            _kept[weakest] = peak;
        }

        return kept;
    }
}
