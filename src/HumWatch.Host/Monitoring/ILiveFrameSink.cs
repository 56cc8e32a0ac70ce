using HumWatch.Core.Analysis;

namespace HumWatch.Host.Monitoring;

/// <summary>Sees each session's frames after the line tracker named them; must copy what it keeps and return quickly.</summary>
internal interface ILiveFrameSink
{
    /// <param name="streamId">Stream (or file group) the frame belongs to.</param>
    /// <param name="frame">The analyser's reused frame; valid only during the call.</param>
    /// <param name="endUtc">UTC time of the frame's last sample.</param>
    void OnFrame(string streamId, AnalysisFrame frame, DateTimeOffset endUtc);
}
