namespace HumWatch.Core.Tests.Spectra;

/// <summary>Measures what a warm call allocates on the calling thread.</summary>
internal static class SteadyState
{
    /// <summary>
    /// Runs <paramref name="round"/> up to <paramref name="maxRounds"/> times and returns the fewest bytes one round
    /// allocated on this thread, stopping at the first round that allocated nothing. A single round can catch one-off
    /// runtime work (a method's tier-up happens on the runtime's schedule, not ours); an allocation in the code under test
    /// shows in every round.
    /// </summary>
    public static long AllocatedBytesPerRound(Action round, int maxRounds = 8)
    {
        var least = long.MaxValue;
        for (var r = 0; r < maxRounds; r++)
        {
            var before = GC.GetAllocatedBytesForCurrentThread();
            round();
            var bytes = GC.GetAllocatedBytesForCurrentThread() - before;
            if (bytes == 0)
            {
                return 0;
            }

            least = Math.Min(least, bytes);
        }

        return least;
    }
}
