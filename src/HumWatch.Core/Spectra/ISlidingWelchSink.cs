namespace HumWatch.Core.Spectra;

/// <summary>Receives each completed frame of a <see cref="SlidingWelch"/>.</summary>
public interface ISlidingWelchSink
{
    /// <summary>
    /// Called once per frame, during <see cref="SlidingWelch.Append"/>. The span covers samples
    /// [<paramref name="spanStartSample"/>, <paramref name="spanEndSample"/>) counted since the last Reset (end exclusive).
    /// Read <see cref="SlidingWelch.AveragedPsd"/> and <see cref="SlidingWelch.SegmentPeriodogram"/> here.
    /// </summary>
    void OnSpan(SlidingWelch welch, long spanStartSample, long spanEndSample);
}
