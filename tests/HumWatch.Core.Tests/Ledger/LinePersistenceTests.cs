using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;
using Xunit;

namespace HumWatch.Core.Tests.Ledger;

public sealed class LinePersistenceTests
{
    private static readonly FindingKey Display75 = FindingKey.Display("display 75 Hz", 1);

    [Fact]
    public void A_key_counts_only_from_its_third_frame_in_a_row_and_a_missed_frame_starts_over()
    {
        // Three frames in a row, as the alert rules ask before raising (common practice, no source).
        var persistence = new LinePersistence(3);

        persistence.Seen(FindingKey.Mains(1), 1);
        Assert.False(persistence.IsPersistent(FindingKey.Mains(1), 1));
        persistence.Seen(FindingKey.Mains(1), 2);
        Assert.False(persistence.IsPersistent(FindingKey.Mains(1), 2));
        persistence.Seen(FindingKey.Mains(1), 3);
        Assert.True(persistence.IsPersistent(FindingKey.Mains(1), 3));

        // Absent in frame 4: frame 5 is a new run.
        persistence.Seen(FindingKey.Mains(1), 5);
        Assert.False(persistence.IsPersistent(FindingKey.Mains(1), 5));
        Assert.False(persistence.IsPersistent(FindingKey.Unidentified(10.25), 5));
    }

    [Fact]
    public void Seeing_a_key_twice_in_one_frame_counts_once()
    {
        var persistence = new LinePersistence(2);

        persistence.Seen(Display75, 1);
        persistence.Seen(Display75, 1);

        Assert.False(persistence.IsPersistent(Display75, 1));
        persistence.Seen(Display75, 2);
        Assert.True(persistence.IsPersistent(Display75, 2));
    }

    [Fact]
    public void One_frame_counts_everything()
    {
        var persistence = new LinePersistence(1);

        Assert.True(persistence.IsPersistent(FindingKey.All, 7));
        Assert.Throws<ArgumentOutOfRangeException>(() => new LinePersistence(0));
    }
}
