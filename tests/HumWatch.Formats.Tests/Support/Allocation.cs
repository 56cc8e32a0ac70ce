namespace HumWatch.Formats.Tests.Support;

/// <summary>Bytes an action allocates on the calling thread (the readers read synchronously, on the caller's thread).</summary>
public static class Allocation
{
    public static (T Result, long AllocatedBytes) Measure<T>(Func<T> action)
    {
        ArgumentNullException.ThrowIfNull(action);
        var before = GC.GetAllocatedBytesForCurrentThread();
        var result = action();
        return (result, GC.GetAllocatedBytesForCurrentThread() - before);
    }
}
