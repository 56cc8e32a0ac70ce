using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using HumWatch.Core.Spectra.Fft;

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
/// ≈ 1e-10 (scipy.stats.chi2.sf(57.9, 5.79)). Against the estimated floor (a median of 16 bins, itself uncertain by
/// ≈ 20 %) it is ≈ 2e-6 (<see cref="LineSignificance"/>), so the near-level, narrowness and segment tests carry much
/// of the rejection: the rate measured on simulated clean EEG (HUMWATCH_MEASURE=1 test run) is ≈ 0.2 lines per
/// channel-hour. Each peak carries its per-bin false-alarm probability from that model.</para>
/// <para><b>Narrowness.</b> A sinusoid seen through a Hann window has no energy beyond its main lobe except sidelobes
/// ≤ −31 dB: relative to the peak bin, the bins 2 … 4 away on both sides sum to ≤ 0.045 of the peak's excess at the
/// worst (half-bin) offset (Hann kernel |sinc(x)/(1 − x²)|²: 0.04 at 1.5 bins, 8e-4 at 2.5, 7e-5 at 3.5). Biological
/// rhythms are 1–3 Hz wide: at 0.25 Hz bins a Gaussian bump of 0.75 Hz FWHM already puts 0.67 of its peak there.
/// A peak is kept only when that shoulder sum stays below <see cref="MaxShoulderRatio"/> (0.25) of the peak's excess:
/// shoulder noise (σ ≈ 1.5·floor over six bins at ν ≈ 5.8) rejects ≈ 7 % of real lines at exactly 10 dB and almost
/// none from 13 dB, while a rhythm's χ² spike must reach ≈ 10× its local mean to pass. The floor is also bounded from
/// below by the mean of the bins 3…5 away (where a tone leaks &lt; −31 dB), so a peak on a rhythm's slope is measured
/// against the rhythm, not the far flanks. <see cref="SegmentConsistency"/> then checks each segment.</para>
/// <para><b>Frequency</b> by Grandke's two-point Hann interpolation on the magnitudes √(P − floor) of the peak bin and
/// its larger neighbour (Grandke 1983), exact for a steady tone up to its negative-frequency image (≤ 6/(π·d³) bins with
/// the image d bins away; at 0.25 Hz bins 4e-3 bins = 1 mHz at 1 Hz, 4e-6 bins at 10 Hz). It replaced parabolic
/// interpolation on the log PSD, whose Hann bias of up to 0.016 bins (4 mHz at 0.25 Hz bins) dominated the error of
/// the mains frequency estimate.
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
    private readonly LineSignificance _significance;
    private readonly double[] _scratch;
    private readonly ChannelPeak[] _kept;
    private readonly int _vectorBits;

    /// <param name="options">Search settings (validated by the caller).</param>
    /// <param name="binCount">One-sided bins of the PSD (segment length / 2 + 1), ≥ 16.</param>
    /// <param name="binWidthHz">Bin spacing, Hz.</param>
    /// <param name="degreesOfFreedom">Equivalent χ² degrees of freedom of a PSD bin (see <see cref="WelchStatistics"/>), ≥ 2.</param>
    /// <param name="binCorrelations">Correlation of PSD bins 1, 2, … apart (<see cref="WelchStatistics.BinPowerCorrelation"/>), for the false-alarm probability; null for one Hann segment's.</param>
    public LineFinder(LineFinderOptions options, int binCount, double binWidthHz, double degreesOfFreedom, double[]? binCorrelations = null)
        : this(options, binCount, binWidthHz, degreesOfFreedom, WidestAccelerated, binCorrelations)
    {
    }

    /// <summary>
    /// As the public constructor, with the prefilter width in bits (512, 256 or 0 = scalar only) for tests: a width the
    /// hardware does not accelerate still runs (emulated), so every width is checked against the scalar scan anywhere.
    /// </summary>
    internal LineFinder(LineFinderOptions options, int binCount, double binWidthHz, double degreesOfFreedom, int vectorBits, double[]? binCorrelations = null)
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
        _vectorBits = vectorBits;
    }

    // The prefilter width the public constructor picks: the widest the hardware accelerates.
    private static int WidestAccelerated => Vector512Lanes<double>.IsAccelerated ? 512 : Vector256Lanes<double>.IsAccelerated ? 256 : 0;

    /// <summary>Largest number of peaks <see cref="Find"/> returns.</summary>
    public int Capacity => _kept.Length;

    /// <summary>Bin spacing, Hz.</summary>
    public double BinWidthHz => _binWidthHz;

    /// <summary>Flanking bins per side used for the floor.</summary>
    public int FlankBins => _flankBins;

    /// <summary>Bins each <see cref="Find"/> searches: the family a peak's false-alarm probability is corrected for.</summary>
    public int SearchedBinCount => Math.Max(0, _maxBin - _minBin + 1);

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

        if (_vectorBits == 512)
        {
            k = Prefilter<Vector512Lanes<double>, Vector512<double>>(psd, k, interiorLast, ref kept);
        }
        else if (_vectorBits == 256)
        {
            k = Prefilter<Vector256Lanes<double>, Vector256<double>>(psd, k, interiorLast, ref kept);
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

        var offset = InterpolateOffset(psd, k, median * _floorCorrection);
        var lowFlank = Math.Max(0, k - GuardBins - Math.Max(2, k - GuardBins - _flankBins));
        var highFlank = Math.Max(0, Math.Min(last, k + GuardBins + _flankBins) - k - GuardBins);
        var probability = _significance.BinProbability(p / floor, lowFlank, highFlank);
        var peak = new ChannelPeak(k, (k + offset) * _binWidthHz, amplitude, 10 * Math.Log10(p / floor), floor, probability);
        return Keep(peak, kept);
    }

    // Vector prefilter over bins k … interiorLast (all six near-level neighbours present), Lanes bins at a time: a lane
    // passes only when the bin is a local maximum and stands at least the prominence ratio over its near level, computed
    // with the same operations in the same order as NearLevel (0 + P[k−3] + P[k+3] + P[k−4] + P[k+4] + P[k−5] + P[k+5],
    // then ÷ 6), so it rejects exactly the bins Consider would reject at those two tests. Passing bins get the full scalar
    // test. NaN semantics match the scalar comparisons: a test written "p &lt; x ⇒ reject" rejects only when the
    // comparison is true. Returns the first bin not covered.
    private int Prefilter<TOps, TVec>(ReadOnlySpan<double> psd, int k, int interiorLast, ref int kept)
        where TOps : struct, ILaneLogic<TVec, double>
        where TVec : struct
    {
        ref var origin = ref MemoryMarshal.GetReference(psd);
        var lanes = TOps.Lanes;
        var ratio = TOps.Splat(_minProminenceRatio);
        var count = TOps.Splat(NearCount);
        var zero = TOps.Splat(0);
        for (; k + lanes - 1 <= interiorLast; k += lanes)
        {
            ref var at = ref Unsafe.Add(ref origin, k);
            var p = TOps.Load(in at);
            var candidate = TOps.AndNot(
                TOps.AndNot(TOps.Greater(p, zero), TOps.Less(p, TOps.Load(in Unsafe.Subtract(ref at, 1)))),
                TOps.LessOrEqual(p, TOps.Load(in Unsafe.Add(ref at, 1))));
            var sum = zero;
            for (var d = GuardBins; d <= NearOuterBins; d++)
            {
                sum = TOps.Add(sum, TOps.Load(in Unsafe.Subtract(ref at, d)));
                sum = TOps.Add(sum, TOps.Load(in Unsafe.Add(ref at, d)));
            }

            var pass = TOps.AndNot(candidate, TOps.Less(p, TOps.Mul(TOps.Div(sum, count), ratio)));
            var bits = TOps.MaskBits(pass);
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

    private double InterpolateOffset(ReadOnlySpan<double> psd, int k, double floor)
    {
        // Grandke's two-point Hann interpolation on magnitudes (T. Grandke, "Interpolation algorithms for discrete
        // Fourier transforms of weighted signals", IEEE Trans. Instrum. Meas. 32(2), 1983, 350–355): the Hann kernel's
        // magnitude is |W(d)| ∝ |sin πd| / |d(1 − d²)| at d bins from the tone, so with the tone δ bins above bin k the
        // larger neighbour's ratio α₊/α₀ = (1 + δ)/(2 − δ) gives δ = (2α₊ − α₀)/(α₀ + α₊) exactly (mirrored for the
        // lower neighbour). A Welch PSD of a steady tone is the mean over segments of |A·W|², the same shape in every
        // segment, so √(PSD − floor) has that shape too. Duda's three-point form 2(α₊ − α₋)/(α₋ + 2α₀ + α₊) is exact
        // as well but lets the noise of the far neighbour in: on seeded tones in white noise (8 s frames, 20–30 dB) its
        // RMS error was 20–25 % larger.
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
