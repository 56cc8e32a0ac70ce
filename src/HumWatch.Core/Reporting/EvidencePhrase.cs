using System.Globalization;
using HumWatch.Core.Attribution;
using HumWatch.Core.Tracking;

namespace HumWatch.Core.Reporting;

/// <summary>One short phrase a technician understands for what decided a line's explanation.</summary>
public static class EvidencePhrase
{
    /// <summary>
    /// E.g. "moves with 2 × the grid (60.012 Hz)", "holds 120.000 Hz while 2 × the grid wandered ±0.031 Hz",
    /// "on other channels than the 60 Hz fundamental", "the grid held too still to tell; could also be display 120 Hz".
    /// Null when only the catalogue spoke.
    /// </summary>
    /// <param name="evidence">The line's evidence.</param>
    /// <param name="source">The explanation given.</param>
    /// <param name="frequencyHz">The line's frequency, Hz.</param>
    /// <param name="alternatives">Alternatives as described in reports (e.g. "display 120 Hz").</param>
    public static string? For(LineEvidence evidence, SourceMatch source, double frequencyHz, IReadOnlyList<string> alternatives)
    {
        ArgumentNullException.ThrowIfNull(alternatives);
        var inv = CultureInfo.InvariantCulture;
        return evidence.Basis switch
        {
            EvidenceBasis.GridFundamental => "the grid's fundamental, on most channels",
            EvidenceBasis.FrequencyTrack when evidence.Lock == GridLock.FollowsGrid =>
                string.Create(inv, $"moves with {source.Harmonic} × the grid over {evidence.SharedFrames} frames (slope {evidence.GridFollowRatio:0.00} of 1)"),
            EvidenceBasis.FrequencyTrack =>
                string.Create(inv, $"holds {frequencyHz:0.000} Hz (±{Spread(evidence.FrequencySpreadHz)}) while the grid's harmonic there wandered ±{Spread(evidence.GridSpreadHz)}: not mains"),
            EvidenceBasis.ChannelPattern =>
                string.Create(inv, $"on other channels than the mains fundamental (overlap {evidence.ChannelOverlap:0%})"),
            EvidenceBasis.Undecided when alternatives.Count > 0 =>
                $"the grid held too still to tell them apart; could also be {alternatives[0]}",
            _ => null,
        };
    }

    private static string Spread(double hz) =>
        double.IsFinite(hz) ? string.Create(CultureInfo.InvariantCulture, $"{hz:0.000} Hz") : "?";
}
