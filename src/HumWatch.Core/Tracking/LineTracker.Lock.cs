using System.Numerics;
using HumWatch.Core.Lines;

namespace HumWatch.Core.Tracking;

// The tracker's grid-lock judgement: whether a possible mains harmonic follows n × the measured fundamental, moves on
// its own, or sits on other channels (the residual sums and the channel overlap the class remarks describe).
public sealed partial class LineTracker
{
    private const double LockRatio = 4;
    private const double FrequencyNoiseHz = 0.001;

    // n × the fundamental must move by at least this (standard deviation) before its track can speak: below it, what
    // moves is the estimates' own noise, not the grid (a grid wanders by hundredths of a hertz; common practice, no source).
    private const double MinGridSpreadHz = 0.006;
    private const double DifferentChannelsOverlap = 0.35;

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
}
