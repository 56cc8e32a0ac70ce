using System.Runtime.CompilerServices;
using Xunit;

namespace HumWatch.Host.Tests.Ingest.Support;

/// <summary>
/// A test against Debian's pyzmq peer, skipped when <see cref="PythonPeer.WhyUnavailable"/> says it cannot run. Decided
/// when tests are discovered, and the reason is put into the test's name, because `dotnet test` at its default
/// verbosity prints a skipped test's name but not its skip reason.
/// </summary>
[AttributeUsage(AttributeTargets.Method)]
public sealed class PythonPeerFactAttribute : FactAttribute
{
    public PythonPeerFactAttribute([CallerMemberName] string method = "", [CallerFilePath] string file = "")
    {
        if (PythonPeer.WhyUnavailable is { } reason)
        {
            Skip = reason;
            DisplayName = $"{Path.GetFileNameWithoutExtension(file)}.{method} (skipped: {reason})";
        }
    }
}
