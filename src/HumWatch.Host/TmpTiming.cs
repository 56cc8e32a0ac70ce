using System.Diagnostics;
using System.Runtime;

namespace HumWatch.Host;

// TEMPORARY instrumentation for issue 14 (removed before merge).
public static class TmpTiming
{
    private static readonly bool On = Environment.GetEnvironmentVariable("HUMWATCH_TMP_TIMING") == "1";
    private static readonly DateTime Start = Process.GetCurrentProcess().StartTime.ToUniversalTime();
    private static double _last;

    public static void Mark(string what)
    {
        if (!On)
        {
            return;
        }

        var now = (DateTime.UtcNow - Start).TotalMilliseconds;
        var cpu = Process.GetCurrentProcess().TotalProcessorTime.TotalMilliseconds;
        Console.Error.WriteLine($"T {now,8:F1} ms (+{now - _last,7:F1}) cpu {cpu,7:F0} jit {System.Runtime.JitInfo.GetCompiledMethodCount(false),5} methods {System.Runtime.JitInfo.GetCompilationTime(false).TotalMilliseconds,7:F1} ms  {what}");
        _last = now;
    }
}
