using System.Numerics;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;

namespace HumWatch.Core.Lines;

/// <summary>
/// Finds narrowband lines in one channel's one-sided Welch density PSD (periodic Hann, µV²/Hz). Fixed-size: built for
/// one bin count and resolution, owns its scratch, allocates nothing per call. Not thread-safe.
/// </summary>
/// <remarks>
/// <para><b>Floor.</b> The median of the bins 4 … 3 + F on both sides of the candidate (F = FloorHalfWidthHz in bins,
/// at least 4): the Hann main lobe is ±2 bins and one guard bin keeps a tone's skirt out. Near DC and Nyquist only one
/// side may be available. The median of χ²_ν/ν lies below its mean (ν ≈ 5.8 for 3 segments: 0.89), so the median is
/// divided by it to estimate the mean floor.</para>
/// <para><b>Threshold.</b> A K-segment Welch bin is ≈ S·χ²_ν/ν with ν ≈ 1.9·K (Welch 1967; Hann, 50 % overlap). For
/// the default 8 s span of 4 s segments (K = 3, ν ≈ 5.8) a noise bin exceeds 10 dB over the true floor with probability
/// ≈ 1e-10 (scipy.stats.chi2.sf(57.9, 5.79)); over ~1000 bins × 1800 frames per channel-hour that is ≈ 2e-4 false
/// peaks per channel-hour from noise alone — the default 10 dB leaves the narrowness test to handle non-noise
/// structure, and 6 dB would already give ≈ 6e-4 per bin (≈ 1000 per channel-hour).</para>
/// <para><b>Narrowness.</b> A sinusoid seen through a Hann window has no energy beyond its main lobe except sidelobes
/// ≤ −31 dB: relative to the peak bin, the bins 2 … 4 away on both sides sum to ≤ 0.045 of the peak's excess at the
/// worst (half-bin) offset (Hann kernel |sinc(x)/(1 − x²)|²: 0.04 at 1.5 bins, 8e-4 at 2.5, 7e-5 at 3.5). Biological
/// rhythms are 1–3 Hz wide: at 0.25 Hz bins a Gaussian bump of 0.75 Hz FWHM already puts 0.67 of its peak there.
/// A peak is kept only when that shoulder sum stays below <see cref="MaxShoulderRatio"/> (0.25) of the peak's excess:
/// shoulder noise (σ ≈ 1.5·floor over six bins at ν ≈ 5.8) rejects ≈ 7 % of real lines at exactly 10 dB and almost
/// none from 13 dB, while a rhythm's χ² spike must reach ≈ 10× its local mean to pass. The floor is also bounded from
/// below by the mean of the bins 3…5 away (where a tone leaks &lt; −31 dB), so a peak on a rhythm's slope is measured
/// against the rhythm, not the far flanks. <see cref="SegmentConsistency"/> then checks each segment.</para>
/// <para><b>Frequency</b> by parabolic interpolation on the log of the floor-subtracted PSD over the peak bin and its
/// neighbours (J. O. Smith, SASP, "Quadratic Interpolation of Spectral Peaks"; Hann bias ≤ 0.016 bins).
/// <b>Amplitude</b> √(Σ_{±2 bins}(P − floor)·Δf): the Hann main lobe holds ≥ 99.95 % of a tone's power.</para>
/// </remarks>
internal sealed class LineFinder
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

    // Bins in the near level when both sides are present.
    private const int NearCount = 2 * (NearOuterBins - GuardBins + 1);

    private readonly int _binCount;
    private readonly double _binWidthHz;
    private readonly int _minBin;
    private readonly int _maxBin;
    private readonly int _flankBins;
    private readonly double _minProminenceRatio;
    private readonly double _minProminenceDb;
    private readonly double _minAmplitudeUvRms;
    private readonly double _floorCorrection;
    private readonly double[] _scratch;
    private readonly ChannelPeak[] _kept;
    private readonly int _vectorBits;

    /// <param name="options">Search settings (validated by the caller).</param>
    /// <param name="binCount">One-sided bins of the PSD (segment length / 2 + 1), ≥ 16.</param>
    /// <param name="binWidthHz">Bin spacing, Hz.</param>
    /// <param name="degreesOfFreedom">Equivalent χ² degrees of freedom of a PSD bin (see <see cref="WelchStatistics"/>), ≥ 2.</param>
    public LineFinder(LineFinderOptions options, int binCount, double binWidthHz, double degreesOfFreedom)
        : this(options, binCount, binWidthHz, degreesOfFreedom, 512)
    {
    }

    /// <summary>As the public constructor, with the widest prefilter vector allowed (512, 256 or 0 bits = scalar only), for tests.</summary>
    internal LineFinder(LineFinderOptions options, int binCount, double binWidthHz, double degreesOfFreedom, int vectorBits)
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
        _scratch = new double[2 * _flankBins];
        _kept = new ChannelPeak[options.MaxPeaksPerChannel];
        _vectorBits = vectorBits;
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

        // Bins whose near level has all six neighbours go through the vector prefilter; the few near DC and Nyquist are
        // checked one by one. Both visit bins in ascending order, so peaks are kept in the same order as a plain scan.
        var kept = 0;
        var k = _minBin;
        var interiorFirst = Math.Max(_minBin, NearOuterBins + 1);
        var interiorLast = Math.Min(_maxBin, _binCount - 1 - NearOuterBins);
        for (; k <= _maxBin && k < interiorFirst; k++)
        {
            kept = Consider(psd, k, kept);
        }

        if (Vector512.IsHardwareAccelerated && _vectorBits >= 512)
        {
            k = Prefilter512(psd, k, interiorLast, ref kept);
        }
        else if (Vector256.IsHardwareAccelerated && _vectorBits >= 256)
        {
            k = Prefilter256(psd, k, interiorLast, ref kept);
        }

        for (; k <= _maxBin; k++)
        {
            kept = Consider(psd, k, kept);
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

    // The full test of bin k; adds it to the kept peaks when it is a line. Returns the new kept count.
    private int Consider(ReadOnlySpan<double> psd, int k, int kept)
    {
        var last = _binCount - 1;
        var p = psd[k];
        if (!(p > 0) || p < psd[k - 1] || (k < last && p <= psd[k + 1]))
        {
            return kept;
        }

        // The level right beside the main lobe (bins 3…5 away, where a tone leaks < −31 dB) also bounds the floor: on
        // the slope of a strong rhythm the far flanks sit low, and a χ² fluctuation of the rhythm would otherwise pass.
        // It is cheap, so it goes first: most local maxima of noise fail against it and never need the median.
        var near = NearLevel(psd, k);
        if (p < near * _minProminenceRatio)
        {
            return kept;
        }

        var median = LocalFloor.Median(psd, k, GuardBins, _flankBins, 2, MinimumFlankBins, _scratch);
        if (!(median > 0))
        {
            return kept;
        }

        var floor = Math.Max(median * _floorCorrection, near);
        if (p < floor * _minProminenceRatio)
        {
            return kept;
        }

        var excess = p - floor;
        if (!IsNarrow(psd, k, floor, excess))
        {
            return kept;
        }

        var power = 0.0;
        for (var j = Math.Max(1, k - MainLobeBins); j <= Math.Min(last, k + MainLobeBins); j++)
        {
            power += psd[j] - floor;
        }

        var amplitude = Math.Sqrt(Math.Max(0, power * _binWidthHz));
        if (amplitude < _minAmplitudeUvRms)
        {
            return kept;
        }

        var offset = InterpolateOffset(psd, k, floor, excess);
        var peak = new ChannelPeak(k, (k + offset) * _binWidthHz, amplitude, 10 * Math.Log10(p / floor), floor);
        return Keep(peak, kept);
    }

    // Vector prefilter over bins k … interiorLast (all six near-level neighbours present): a lane passes only when the
    // bin is a local maximum and stands at least the prominence ratio over its near level, computed with the same
    // operations in the same order as NearLevel (0 + P[k−3] + P[k+3] + P[k−4] + P[k+4] + P[k−5] + P[k+5], then ÷ 6),
    // so it rejects exactly the bins Consider would reject at those two tests. Passing bins get the full scalar test.
    // NaN semantics match the scalar comparisons: a test written "p &lt; x ⇒ reject" rejects only when the comparison is true.
    // Returns the first bin not covered.
    private int Prefilter256(ReadOnlySpan<double> psd, int k, int interiorLast, ref int kept)
    {
        ref var origin = ref MemoryMarshal.GetReference(psd);
        var ratio = Vector256.Create(_minProminenceRatio);
        var count = Vector256.Create((double)NearCount);
        for (; k + Vector256<double>.Count - 1 <= interiorLast; k += Vector256<double>.Count)
        {
            var at = (nuint)k;
            var p = Vector256.LoadUnsafe(ref origin, at);
            var candidate = Vector256.AndNot(
                Vector256.AndNot(Vector256.GreaterThan(p, Vector256<double>.Zero), Vector256.LessThan(p, Vector256.LoadUnsafe(ref origin, at - 1))),
                Vector256.LessThanOrEqual(p, Vector256.LoadUnsafe(ref origin, at + 1)));
            var sum = Vector256<double>.Zero + Vector256.LoadUnsafe(ref origin, at - 3);
            sum += Vector256.LoadUnsafe(ref origin, at + 3);
            sum += Vector256.LoadUnsafe(ref origin, at - 4);
            sum += Vector256.LoadUnsafe(ref origin, at + 4);
            sum += Vector256.LoadUnsafe(ref origin, at - 5);
            sum += Vector256.LoadUnsafe(ref origin, at + 5);
            var pass = Vector256.AndNot(candidate, Vector256.LessThan(p, sum / count * ratio));
            var bits = pass.ExtractMostSignificantBits();
            while (bits != 0)
            {
                kept = Consider(psd, k + BitOperations.TrailingZeroCount(bits), kept);
                bits &= bits - 1;
            }
        }

        return k;
    }

    // As Prefilter256, eight bins at a time.
    private int Prefilter512(ReadOnlySpan<double> psd, int k, int interiorLast, ref int kept)
    {
        ref var origin = ref MemoryMarshal.GetReference(psd);
        var ratio = Vector512.Create(_minProminenceRatio);
        var count = Vector512.Create((double)NearCount);
        for (; k + Vector512<double>.Count - 1 <= interiorLast; k += Vector512<double>.Count)
        {
            var at = (nuint)k;
            var p = Vector512.LoadUnsafe(ref origin, at);
            var candidate = Vector512.AndNot(
                Vector512.AndNot(Vector512.GreaterThan(p, Vector512<double>.Zero), Vector512.LessThan(p, Vector512.LoadUnsafe(ref origin, at - 1))),
                Vector512.LessThanOrEqual(p, Vector512.LoadUnsafe(ref origin, at + 1)));
            var sum = Vector512<double>.Zero + Vector512.LoadUnsafe(ref origin, at - 3);
            sum += Vector512.LoadUnsafe(ref origin, at + 3);
            sum += Vector512.LoadUnsafe(ref origin, at - 4);
            sum += Vector512.LoadUnsafe(ref origin, at + 4);
            sum += Vector512.LoadUnsafe(ref origin, at - 5);
            sum += Vector512.LoadUnsafe(ref origin, at + 5);
            var pass = Vector512.AndNot(candidate, Vector512.LessThan(p, sum / count * ratio));
            var bits = pass.ExtractMostSignificantBits();
            while (bits != 0)
            {
                kept = Consider(psd, k + BitOperations.TrailingZeroCount(bits), kept);
                bits &= bits - 1;
            }
        }

        return k;
    }

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

    private double InterpolateOffset(ReadOnlySpan<double> psd, int k, double floor, double excess)
    {
        // Log of the floor-subtracted PSD, so a flat floor does not pull the vertex towards the bin centre; neighbours
        // pushed below the floor by noise are held at a small fraction of the peak instead of log(≤ 0).
        var tiny = 1e-4 * excess;
        var centre = Math.Log(excess);
        var left = Math.Log(Math.Max(psd[k - 1] - floor, tiny));

        // At the last bin the spectrum continues as its mirror image about Nyquist.
        var right = k + 1 < _binCount ? Math.Log(Math.Max(psd[k + 1] - floor, tiny)) : left;
        var curvature = left - (2 * centre) + right;
        if (!(curvature < 0))
        {
            return 0;
        }

        var offset = 0.5 * (left - right) / curvature;
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
