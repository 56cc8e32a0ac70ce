using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;

namespace HumWatch.Bench;

/// <summary>The machine line printed before every section.</summary>
internal static class MachineInfo
{
    public static string Describe() =>
        $"machine: {Environment.ProcessorCount} cores | cpu: {CpuModel()} | runtime: {RuntimeInformation.FrameworkDescription} {RuntimeInformation.ProcessArchitecture}"
        + $" | Vector256 accelerated: {Vector256.IsHardwareAccelerated} | Vector512 accelerated: {Vector512.IsHardwareAccelerated}";

    private static string CpuModel()
    {
        const string path = "/proc/cpuinfo";
        try
        {
            foreach (var line in File.ReadLines(path))
            {
                if (line.StartsWith("model name", StringComparison.Ordinal))
                {
                    var colon = line.IndexOf(':', StringComparison.Ordinal);
                    return colon >= 0 ? line[(colon + 1)..].Trim() : line;
                }
            }

            return $"unknown (no 'model name' in {path})";
        }
        catch (IOException e)
        {
            return $"unknown ({path}: {e.Message})";
        }
        catch (UnauthorizedAccessException e)
        {
            return $"unknown ({path}: {e.Message})";
        }
    }
}
