using System.Runtime.CompilerServices;

namespace HumWatch.Host.Tests.Web.Support;

/// <summary>
/// A test that needs an outside peer, skipped when <c>reason</c> says the peer is missing; the reason goes into the
/// test's name, since `dotnet test` at its default verbosity prints a skipped test's name but not its skip reason.
/// </summary>
public abstract class PeerFactAttribute : Xunit.FactAttribute
{
    protected PeerFactAttribute(string? reason, string method, string file)
    {
        if (reason is not null)
        {
            Skip = reason;
            DisplayName = $"{Path.GetFileNameWithoutExtension(file)}.{method} (skipped: {reason})";
        }
    }
}

/// <summary>A test in a real browser (Debian's chromium and chromium-driver).</summary>
[AttributeUsage(AttributeTargets.Method)]
public sealed class BrowserFactAttribute([CallerMemberName] string method = "", [CallerFilePath] string file = "")
    : PeerFactAttribute(Browser.WhyUnavailable, method, file);

/// <summary>A test that reads /metrics with Debian's python3-prometheus-client.</summary>
[AttributeUsage(AttributeTargets.Method)]
public sealed class PrometheusParserFactAttribute([CallerMemberName] string method = "", [CallerFilePath] string file = "")
    : PeerFactAttribute(PrometheusParser.WhyUnavailable, method, file);

/// <summary>A test that runs Debian's /usr/bin/python3 with its standard library only.</summary>
[AttributeUsage(AttributeTargets.Method)]
public sealed class StandardPythonFactAttribute([CallerMemberName] string method = "", [CallerFilePath] string file = "")
    : PeerFactAttribute(File.Exists(PrometheusParser.Python) ? null : $"needs Debian's python3: {PrometheusParser.Python} is not installed (.ci/run installs python3 packages with apt)", method, file);
