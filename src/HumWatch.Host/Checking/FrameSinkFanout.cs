using HumWatch.Core.Analysis;

namespace HumWatch.Host.Checking;

/// <summary>Hands each frame to several sinks in order (e.g. the report accumulator and the alert book).</summary>
public sealed class FrameSinkFanout(params IAnalysisFrameSink[] sinks) : IAnalysisFrameSink
{
    private readonly IAnalysisFrameSink[] _sinks = sinks;

    public void OnFrame(AnalysisFrame frame)
    {
        foreach (var sink in _sinks)
        {
            sink.OnFrame(frame);
        }
    }
}
