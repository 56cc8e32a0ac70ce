using System.Runtime.CompilerServices;
using Xunit;

namespace HumWatch.Core.Tests.Scenarios;

/// <summary>
/// An opt-in measurement run: skipped unless HUMWATCH_MEASURE=1. Decided when tests are discovered, and the reason is
/// put into the test's name, because `dotnet test` at its default verbosity prints a skipped test's name but not its
/// skip reason.
/// </summary>
[AttributeUsage(AttributeTargets.Method)]
public sealed class MeasurementFactAttribute : FactAttribute
{
    public const string Reason = "opt-in measurement run, set HUMWATCH_MEASURE=1 to run it";

    public MeasurementFactAttribute([CallerMemberName] string method = "", [CallerFilePath] string file = "")
    {
        if (Environment.GetEnvironmentVariable("HUMWATCH_MEASURE") != "1")
        {
            Skip = Reason;
            DisplayName = $"{Path.GetFileNameWithoutExtension(file)}.{method} (skipped: {Reason})";
        }
    }
}
