using HumWatch.Core.Ledger;
using Xunit;

namespace HumWatch.Core.Tests.Ledger;

public sealed class LinePersistenceTests
{
    [Fact]
    public void A_key_counts_only_from_its_third_frame_in_a_row_and_a_missed_frame_starts_over()
    {
        // Three frames in a row, as the alert rules ask before raising (common practice, no source).
        var persistence = new LinePersistence(3);

        persistence.Seen("mains/h1", 1);
        Assert.False(persistence.IsPersistent("mains/h1", 1));
        persistence.Seen("mains/h1", 2);
        Assert.False(persistence.IsPersistent("mains/h1", 2));
        persistence.Seen("mains/h1", 3);
        Assert.True(persistence.IsPersistent("mains/h1", 3));

        // Absent in frame 4: frame 5 is a new run.
        persistence.Seen("mains/h1", 5);
        Assert.False(persistence.IsPersistent("mains/h1", 5));
        Assert.False(persistence.IsPersistent("unidentified/10.25Hz", 5));
    }

    [Fact]
    public void Seeing_a_key_twice_in_one_frame_counts_once()
    {
        var persistence = new LinePersistence(2);

        persistence.Seen("k", 1);
        persistence.Seen("k", 1);

        Assert.False(persistence.IsPersistent("k", 1));
        persistence.Seen("k", 2);
        Assert.True(persistence.IsPersistent("k", 2));
    }

    [Fact]
    public void One_frame_counts_everything()
    {
        var persistence = new LinePersistence(1);

        Assert.True(persistence.IsPersistent("anything", 7));
        Assert.Throws<ArgumentOutOfRangeException>(() => new LinePersistence(0));
    }
}
