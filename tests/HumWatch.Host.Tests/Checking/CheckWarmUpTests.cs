using HumWatch.Host.Checking;
using Xunit;

namespace HumWatch.Host.Tests.Checking;

public sealed class CheckWarmUpTests
{
    [Fact]
    public void The_warm_up_analyses_its_twelve_seconds_on_the_frame_grid()
    {
        // 12 s at default settings (8 s span, 2 s hop): frames end at 8, 10 and 12 s. Fewer would mean the warm-up
        // stopped short of the line finder and tracker it exists to run.
        Assert.Equal(3, CheckWarmUp.Run());
    }
}
