namespace HumWatch.Core.Tracking;

/// <summary>Where the grid frequency lines are attributed against came from.</summary>
public enum GridOrigin
{
    /// <summary>Not configured and not yet seen in the data.</summary>
    Unknown = 0,

    /// <summary>Fixed by the configuration (Analysis:Sources:MainsHz) or `check --mains`.</summary>
    Configured,

    /// <summary>Decided from the data: a fundamental near 50 or 60 Hz on most channels, with its harmonics.</summary>
    Measured,
}

/// <summary>How a line's frequency behaves against the grid's measured fundamental over recent frames.</summary>
public enum GridLock
{
    /// <summary>Not enough shared frames, no harmonic relation, or a grid too steady to tell.</summary>
    Unknown = 0,

    /// <summary>The line moves with n × the fundamental: a mains harmonic.</summary>
    FollowsGrid,

    /// <summary>The line holds its own frequency while n × the fundamental wanders: not the grid.</summary>
    Independent,

    /// <summary>The frequency track cannot tell, but the line sits on other channels than the fundamental (weaker evidence).</summary>
    ChannelsDiffer,
}

/// <summary>What decided a line's explanation.</summary>
public enum EvidenceBasis
{
    /// <summary>Only the catalogue and the other lines of the frame.</summary>
    Catalogue = 0,

    /// <summary>The line is the grid's fundamental.</summary>
    GridFundamental,

    /// <summary>Its frequency track against n × the fundamental's.</summary>
    FrequencyTrack,

    /// <summary>Its channels against the fundamental's.</summary>
    ChannelPattern,

    /// <summary>Two explanations fit and the evidence could not choose; the other one is kept as an alternative.</summary>
    Undecided,
}

/// <summary>
/// The evidence behind a line's explanation, from the <see cref="LineTracker"/>: how its frequency followed the grid,
/// which channels it shares with the fundamental, and how steady it was.
/// </summary>
/// <param name="Basis">What decided the explanation.</param>
/// <param name="Lock">The frequency-track (or channel-pattern) verdict against the grid.</param>
/// <param name="GridFollowRatio">
/// Least-squares slope of the line's frequency deviations on n × the fundamental's, over the shared frames: 1 for a
/// harmonic locked to the grid, near 0 for a source of its own; NaN when not computed.
/// </param>
/// <param name="ChannelOverlap">Mean Jaccard overlap of the line's channels with the fundamental's (0..1); NaN when not computed.</param>
/// <param name="FrequencySpreadHz">
/// Standard deviation of the line's frequency, Hz: over the frames it shares with the fundamental (unfolded) when there
/// are two or more, else over all its tracked frames; NaN with fewer than two.
/// </param>
/// <param name="GridSpreadHz">Standard deviation of n × the fundamental over the same frames, Hz; NaN when not computed.</param>
/// <param name="SharedFrames">Frames in which both the line and the fundamental were seen (the evidence window).</param>
public readonly record struct LineEvidence(
    EvidenceBasis Basis,
    GridLock Lock,
    double GridFollowRatio,
    double ChannelOverlap,
    double FrequencySpreadHz,
    double GridSpreadHz,
    int SharedFrames)
{
    public static LineEvidence None { get; } = new(EvidenceBasis.Catalogue, GridLock.Unknown, double.NaN, double.NaN, double.NaN, double.NaN, 0);
}
