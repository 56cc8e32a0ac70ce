namespace HumWatch.Fuzz;

/// <summary>
/// The in-process memory check: what one input may make the code under test allocate on this thread, a fixed part
/// (file buffers, parser tables) plus a multiple of the input's size. A reader that sizes a buffer from what a header
/// declares rather than from what the file holds breaks it on a small input, long before afl-fuzz's memory limit.
/// </summary>
internal readonly struct AllocationBudget
{
    private readonly long _startBytes;
    private readonly long _limitBytes;

    private AllocationBudget(long startBytes, long limitBytes) => (_startBytes, _limitBytes) = (startBytes, limitBytes);

    /// <summary>Starts counting: <paramref name="fixedBytes"/> + <paramref name="perInputByte"/> × the input's length.</summary>
    public static AllocationBudget Start(int inputLength, long fixedBytes, int perInputByte) =>
        new(GC.GetAllocatedBytesForCurrentThread(), fixedBytes + ((long)perInputByte * inputLength));

    public long AllocatedBytes => GC.GetAllocatedBytesForCurrentThread() - _startBytes;

    /// <exception cref="FuzzCheckFailedException">More was allocated than the budget allows.</exception>
    public void Check(string what)
    {
        var allocated = AllocatedBytes;
        if (allocated > _limitBytes)
        {
            throw new FuzzCheckFailedException($"{what} allocated {allocated} bytes, over the budget of {_limitBytes} bytes for this input");
        }
    }
}
