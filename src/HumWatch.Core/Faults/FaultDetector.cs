using HumWatch.Core.Signals;

namespace HumWatch.Core.Faults;

/// <summary>
/// Time-domain channel checks over each analysis span: flat, clipped, non-finite. Keeps per-block statistics per
/// channel in a ring (block = gcd(span, hop) samples, one hop in the default settings) so each span's verdict is a sum
/// over whole blocks (<see cref="BlockStatisticsRing"/>). Allocation-free after construction. Not thread-safe.
/// </summary>
/// <remarks>
/// <para>
/// A block is still when its standard deviation is under FlatStdDevUv, moving otherwise. Still is judged per block, not
/// over the whole span: an electrode that comes off for one hop of an 8 s span still moves over the span as a whole,
/// yet that part of the span carries no signal and would distort the channel's spectrum, so any still block leaves
/// the channel out of line finding for the span.
/// </para>
/// <para>
/// A still block is flat (disconnected, dead or bridged input: no variance around the channel's usual level) or pinned
/// at a rail (saturation: electrode offset or drift beyond the amplifier's input range). Amplifiers saturate before the
/// converter and exports rescale, so the declared range is often not where that happens; the usual level has to come
/// from the span itself, since a frame must depend on its span alone. A still block is pinned when it sits at the
/// declared limits, when its level is SaturationDistanceSd or more of the channel's moving standard deviations from
/// their mean (and at least SaturationMinDistanceUv), or when it holds the value at which the moving part piles up (below). A channel still for the whole
/// span has no usual level of its own; it is pinned when its level lies outside the band every moving channel covers
/// (mean ± that same distance), since no working electrode of the montage goes there — a level
/// inside that band, zero included, stays flat. Without any moving channel nothing says where the rails are: flat.
/// </para>
/// <para>
/// Clipped: a block with at least ClippedFraction of its samples at the declared limits, a pinned block, or a moving
/// part whose highest (or lowest) value repeats in at least RepeatedExtremeFraction of its samples (and at least
/// RepeatedExtremeMinSamples) — a continuous signal touches its extreme about once, a saturating one keeps returning to
/// it. That test is skipped for a channel whose smallest step between samples is CoarseStepSd of its standard deviation
/// or more, where quantisation alone fills the top level. Fraction = share of the span's samples at a limit (declared,
/// repeated extreme, or pinned). Flat: Fraction = share of flat blocks. Non-finite: any NaN/∞ in the span.
/// </para>
/// </remarks>
internal sealed class FaultDetector
{
    private readonly int _channelCount;
    private readonly int _blockSamples;
    private readonly int _ringBlocks;
    private readonly double _flatStdDevUv;
    private readonly double _clippedFraction;
    private readonly double _saturationDistanceSd;
    private readonly double _saturationMinDistanceUv;
    private readonly double _repeatedExtremeFraction;
    private readonly int _repeatedExtremeMinSamples;
    private readonly double _coarseStepSd;
    private readonly BlockStatisticsRing _ring;

    // Per ring cell (block × channel): the ring's arrays (see BlockStatisticsRing).
    private readonly double[] _reference;
    private readonly double[] _sum;
    private readonly double[] _sumSquares;
    private readonly int[] _finite;
    private readonly int[] _clipped;
    private readonly int[] _nonFinite;
    private readonly double[] _max;
    private readonly double[] _min;
    private readonly int[] _atMax;
    private readonly int[] _atMin;
    private readonly double[] _last;
    private readonly double[] _minStep;

    // Per channel, the moving part of the span being evaluated (scratch, so Evaluate allocates nothing).
    private readonly long[] _movingCount;
    private readonly double[] _movingMean;
    private readonly double[] _movingSd;
    private readonly double[] _movingMax;
    private readonly double[] _movingMin;
    private readonly long[] _atMovingMax;
    private readonly long[] _atMovingMin;
    private readonly double[] _movingStep;
    private long _position;

    /// <param name="layout">Channels and their ranges (for clipping).</param>
    /// <param name="options">Thresholds (validated by the caller).</param>
    /// <param name="spanSamples">Samples per analysis span.</param>
    /// <param name="hopSamples">Samples between spans; also the largest block the caller appends between evaluations.</param>
    public FaultDetector(StreamLayout layout, FaultOptions options, int spanSamples, int hopSamples)
        : this(layout, options, spanSamples, hopSamples, BlockStatisticsRing.WidestAccelerated)
    {
    }

    /// <summary>As the public constructor, with the channel group width in bits (512, 256 or 0 = one channel at a time), for tests.</summary>
    internal FaultDetector(StreamLayout layout, FaultOptions options, int spanSamples, int hopSamples, int vectorBits)
    {
        ArgumentNullException.ThrowIfNull(layout);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentOutOfRangeException.ThrowIfLessThan(spanSamples, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(hopSamples, 1);
        _channelCount = layout.ChannelCount;
        _blockSamples = Gcd(spanSamples, hopSamples);
        _ringBlocks = (spanSamples / _blockSamples) + (hopSamples / _blockSamples) + 1;
        _flatStdDevUv = options.FlatStdDevUv;
        _clippedFraction = options.ClippedFraction;
        _saturationDistanceSd = options.SaturationDistanceSd;
        _saturationMinDistanceUv = options.SaturationMinDistanceUv;
        _repeatedExtremeFraction = options.RepeatedExtremeFraction;
        _repeatedExtremeMinSamples = options.RepeatedExtremeMinSamples;
        _coarseStepSd = options.CoarseStepSd;
        _ring = new BlockStatisticsRing(layout, options.FallbackClipLevelUv, _ringBlocks, vectorBits);
        _reference = _ring.Reference;
        _sum = _ring.Sum;
        _sumSquares = _ring.SumSquares;
        _finite = _ring.Finite;
        _clipped = _ring.Clipped;
        _nonFinite = _ring.NonFinite;
        _max = _ring.Max;
        _min = _ring.Min;
        _atMax = _ring.AtMax;
        _atMin = _ring.AtMin;
        _last = _ring.Last;
        _minStep = _ring.MinStep;
        _movingCount = new long[_channelCount];
        _movingMean = new double[_channelCount];
        _movingSd = new double[_channelCount];
        _movingMax = new double[_channelCount];
        _movingMin = new double[_channelCount];
        _atMovingMax = new long[_channelCount];
        _atMovingMin = new long[_channelCount];
        _movingStep = new double[_channelCount];
    }

    /// <summary>Samples per statistics block.</summary>
    public int BlockSamples => _blockSamples;

    /// <summary>Most faults one evaluation can report (three kinds per channel).</summary>
    public int Capacity => 3 * _channelCount;

    /// <summary>Adds the next contiguous samples (channel-major, indices continue since the last Reset).</summary>
    public void Append(ReadOnlySpan<float> channelMajor, int samplesPerChannel)
    {
        if (channelMajor.Length < (long)samplesPerChannel * _channelCount)
        {
            throw new ArgumentException($"Block must hold {_channelCount} channels × {samplesPerChannel} samples.", nameof(channelMajor));
        }

        var offset = 0;
        while (offset < samplesPerChannel)
        {
            var absolute = _position + offset;
            var inBlock = (int)(absolute % _blockSamples);
            var take = Math.Min(samplesPerChannel - offset, _blockSamples - inBlock);
            var slot = (int)((absolute / _blockSamples) % _ringBlocks);
            var baseCell = slot * _channelCount;
            if (inBlock == 0)
            {
                _ring.ClearSlot(baseCell);
            }

            _ring.Add(channelMajor, offset, samplesPerChannel, take, baseCell);
            offset += take;
        }

        _position += samplesPerChannel;
    }

    /// <summary>Blocks in the statistics ring.</summary>
    internal int RingBlocks => _ringBlocks;

    /// <summary>The raw statistics held in ring slot <paramref name="slot"/> for <paramref name="channel"/> (for tests).</summary>
    internal BlockStatistics SlotStatistics(int slot, int channel)
    {
        return _ring.Statistics((slot * _channelCount) + channel);
    }

    /// <summary>Forgets everything; sample indices restart at 0.</summary>
    public void Reset()
    {
        _position = 0;
    }

    /// <summary>
    /// Judges the span [<paramref name="spanStart"/>, <paramref name="spanEnd"/>) (indices since Reset, block-aligned,
    /// within the last span + hop samples appended). Writes faults in channel order and marks channels to leave out of
    /// line finding (any still block, or non-finite). Returns the number of faults.
    /// </summary>
    public int Evaluate(long spanStart, long spanEnd, Span<ChannelFault> faults, Span<bool> excluded)
    {
        if (spanStart % _blockSamples != 0 || spanEnd % _blockSamples != 0 || spanEnd <= spanStart || spanEnd > _position
            || (_position - spanStart) > (long)_ringBlocks * _blockSamples)
        {
            throw new ArgumentOutOfRangeException(nameof(spanStart), spanStart, $"Span [{spanStart}, {spanEnd}) must be block-aligned ({_blockSamples}) and within the last {(long)_ringBlocks * _blockSamples} samples appended (now at {_position}).");
        }

        if (faults.Length < Capacity || excluded.Length < _channelCount)
        {
            throw new ArgumentException($"Buffers must hold {Capacity} faults and {_channelCount} flags.", nameof(faults));
        }

        var firstBlock = spanStart / _blockSamples;
        var blocks = (int)((spanEnd - spanStart) / _blockSamples);
        var spanSamples = (double)(spanEnd - spanStart);

        // Pass 1: every channel's moving part, and the band of levels the moving channels cover.
        var bandLow = double.PositiveInfinity;
        var bandHigh = double.NegativeInfinity;
        for (var c = 0; c < _channelCount; c++)
        {
            DescribeMoving(c, firstBlock, blocks);
            if (_movingCount[c] > 0)
            {
                var reach = PinnedDistance(c);
                bandLow = Math.Min(bandLow, _movingMean[c] - reach);
                bandHigh = Math.Max(bandHigh, _movingMean[c] + reach);
            }
        }

        var hasBand = bandLow <= bandHigh;
        var count = 0;
        for (var c = 0; c < _channelCount; c++)
        {
            var moving = _movingCount[c];
            var repeatedHigh = false;
            var repeatedLow = false;
            if (moving > 0 && _movingStep[c] < _coarseStepSd * _movingSd[c])
            {
                var need = Math.Max(_repeatedExtremeMinSamples, _repeatedExtremeFraction * moving);
                repeatedHigh = _atMovingMax[c] >= need;
                repeatedLow = _atMovingMin[c] >= need;
            }

            var flatBlocks = 0;
            var pinnedBlocks = 0;
            var declaredBlocks = 0;
            long atLimit = 0;
            long nonFinite = 0;
            for (var b = 0; b < blocks; b++)
            {
                var cell = ((int)((firstBlock + b) % _ringBlocks) * _channelCount) + c;
                var n = _finite[cell];
                nonFinite += _nonFinite[cell];
                var declared = (double)_clipped[cell] / _blockSamples >= _clippedFraction;
                if (IsStill(cell, out var level))
                {
                    bool pinned;
                    if (declared)
                    {
                        pinned = true;
                    }
                    else if (moving > 0)
                    {
                        pinned = Math.Abs(level - _movingMean[c]) >= PinnedDistance(c)
                            || (repeatedHigh && _min[cell] <= _movingMax[c] && _movingMax[c] <= _max[cell])
                            || (repeatedLow && _min[cell] <= _movingMin[c] && _movingMin[c] <= _max[cell]);
                    }
                    else
                    {
                        pinned = hasBand && (level < bandLow || level > bandHigh);
                    }

                    if (pinned)
                    {
                        pinnedBlocks++;
                        atLimit += n;
                    }
                    else
                    {
                        flatBlocks++;
                    }

                    continue;
                }

                if (declared)
                {
                    declaredBlocks++;
                }

                long rail = 0;
                if (repeatedHigh && n > 0 && _max[cell] == _movingMax[c])
                {
                    rail += _atMax[cell];
                }

                if (repeatedLow && n > 0 && _min[cell] == _movingMin[c])
                {
                    rail += _atMin[cell];
                }

                // A repeated extreme at the declared limit is counted once.
                atLimit += Math.Max(_clipped[cell], rail);
            }

            if (flatBlocks > 0)
            {
                faults[count++] = new ChannelFault(c, ChannelFaultKind.Flat, (double)flatBlocks / blocks);
            }

            if (pinnedBlocks > 0 || declaredBlocks > 0 || repeatedHigh || repeatedLow)
            {
                faults[count++] = new ChannelFault(c, ChannelFaultKind.Clipped, atLimit / spanSamples);
            }

            if (nonFinite > 0)
            {
                faults[count++] = new ChannelFault(c, ChannelFaultKind.NonFinite, nonFinite / spanSamples);
            }

            excluded[c] = flatBlocks > 0 || pinnedBlocks > 0 || nonFinite > 0;
        }

        return count;
    }

    // How far from channel c's moving mean a still level must lie to be pinned at a rail rather than flat.
    private double PinnedDistance(int c) => Math.Max(_saturationDistanceSd * _movingSd[c], _saturationMinDistanceUv);

    // Still: at least two finite samples with a standard deviation under the flat threshold; level = their mean.
    private bool IsStill(int cell, out double level)
    {
        var n = _finite[cell];
        level = n > 0 ? _reference[cell] + (_sum[cell] / n) : double.NaN;
        if (n < 2)
        {
            return false;
        }

        var mean = _sum[cell] / n;
        var variance = Math.Max(0, (_sumSquares[cell] / n) - (mean * mean));
        return Math.Sqrt(variance) < _flatStdDevUv;
    }

    // Mean, standard deviation (pooled over the blocks), extremes with their counts and smallest step of channel c's
    // moving blocks in the span.
    private void DescribeMoving(int c, long firstBlock, int blocks)
    {
        long total = 0;
        var weighted = 0.0;
        var max = double.NegativeInfinity;
        var min = double.PositiveInfinity;
        long atMax = 0;
        long atMin = 0;
        var step = double.PositiveInfinity;
        for (var b = 0; b < blocks; b++)
        {
            var cell = ((int)((firstBlock + b) % _ringBlocks) * _channelCount) + c;
            var n = _finite[cell];
            if (n == 0 || IsStill(cell, out _))
            {
                continue;
            }

            total += n;
            weighted += (n * _reference[cell]) + _sum[cell];
            step = Math.Min(step, _minStep[cell]);
            if (_max[cell] > max)
            {
                max = _max[cell];
                atMax = _atMax[cell];
            }
            else if (_max[cell] == max)
            {
                atMax += _atMax[cell];
            }

            if (_min[cell] < min)
            {
                min = _min[cell];
                atMin = _atMin[cell];
            }
            else if (_min[cell] == min)
            {
                atMin += _atMin[cell];
            }
        }

        var sd = 0.0;
        var mean = 0.0;
        if (total > 0)
        {
            // Within-block scatter plus the scatter of block means about the overall mean.
            mean = weighted / total;
            var scatter = 0.0;
            for (var b = 0; b < blocks; b++)
            {
                var cell = ((int)((firstBlock + b) % _ringBlocks) * _channelCount) + c;
                var n = _finite[cell];
                if (n == 0 || IsStill(cell, out var blockMean))
                {
                    continue;
                }

                var relative = _sum[cell] / n;
                var variance = Math.Max(0, (_sumSquares[cell] / n) - (relative * relative));
                var offset = blockMean - mean;
                scatter += n * (variance + (offset * offset));
            }

            sd = Math.Sqrt(scatter / total);
        }

        _movingCount[c] = total;
        _movingMean[c] = mean;
        _movingSd[c] = sd;
        _movingMax[c] = max;
        _movingMin[c] = min;
        _atMovingMax[c] = atMax;
        _atMovingMin[c] = atMin;
        _movingStep[c] = step;
    }

    private static int Gcd(int a, int b)
    {
        while (b != 0)
        {
            (a, b) = (b, a % b);
        }

        return a;
    }
}
