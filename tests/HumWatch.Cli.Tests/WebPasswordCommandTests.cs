using HumWatch.Cli.Commands;
using HumWatch.Host.Web;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>`humwatch web-password`: a hash for Web:PasswordHash that the page's sign-in accepts for that password only.</summary>
public sealed class WebPasswordCommandTests
{
    [Fact]
    public void The_printed_hash_verifies_the_password_and_no_other()
    {
        using var stdout = new StringWriter();
        using var stderr = new StringWriter();

        var code = WebPasswordCommand.Run(new StringReader("wall monitor 3\n"), stdout, stderr);

        Assert.Equal(0, code);
        var hash = stdout.ToString().Trim();
        Assert.StartsWith("pbkdf2-sha256:", hash, StringComparison.Ordinal);
        Assert.DoesNotContain("wall monitor 3", hash, StringComparison.Ordinal);
        Assert.True(PasswordCheck.Verify("wall monitor 3", hash));
        Assert.False(PasswordCheck.Verify("wall monitor 4", hash));
    }

    [Fact]
    public void A_missing_or_short_password_is_refused_with_exit_code_2()
    {
        using var stdout = new StringWriter();
        using var stderr = new StringWriter();
        Assert.Equal(2, WebPasswordCommand.Run(new StringReader(""), stdout, stderr));
        Assert.Equal(2, WebPasswordCommand.Run(new StringReader("short\n"), stdout, stderr));
        Assert.Contains("use at least 8", stderr.ToString(), StringComparison.Ordinal);
        Assert.Empty(stdout.ToString());
    }
}
