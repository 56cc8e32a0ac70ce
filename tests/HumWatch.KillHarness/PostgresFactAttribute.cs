using System.Runtime.CompilerServices;
using HumWatch.TestSupport;
using Xunit;

namespace HumWatch.KillHarness;

/// <summary>
/// A test that needs PostgreSQL, skipped where <see cref="PostgresServer.SkipReason"/> says none can be had (never when
/// HUMWATCH_REQUIRE_POSTGRES=1: then a missing server fails it). Decided at discovery, the reason put into the test's
/// name, because `dotnet test` at its default verbosity prints a skipped test's name but not its skip reason.
/// </summary>
[AttributeUsage(AttributeTargets.Method)]
public sealed class PostgresFactAttribute : FactAttribute
{
    public PostgresFactAttribute([CallerMemberName] string method = "", [CallerFilePath] string file = "")
    {
        if (PostgresServer.SkipReason is { } reason)
        {
            Skip = reason;
            DisplayName = $"{Path.GetFileNameWithoutExtension(file)}.{method} (skipped: {reason})";
        }
    }
}
