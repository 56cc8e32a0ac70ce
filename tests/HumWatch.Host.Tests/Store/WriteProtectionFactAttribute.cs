using System.Runtime.CompilerServices;
using Xunit;

namespace HumWatch.Host.Tests.Store;

/// <summary>
/// A test that needs file modes to keep this process from writing: skipped (with the reason in its name, which
/// `dotnet test` prints) when a write to a file of mode 0444 still succeeds — as root, whom modes do not stop, or on
/// Windows. Found out by an actual write attempt, not by asking who we are.
/// </summary>
[AttributeUsage(AttributeTargets.Method)]
public sealed class WriteProtectionFactAttribute : FactAttribute
{
    public WriteProtectionFactAttribute([CallerMemberName] string method = "", [CallerFilePath] string file = "")
    {
        if (WhyNot() is { } reason)
        {
            Skip = reason;
            DisplayName = $"{Path.GetFileNameWithoutExtension(file)}.{method} (skipped: {reason})";
        }
    }

    private static string? WhyNot()
    {
        if (OperatingSystem.IsWindows())
        {
            return "Windows has no file mode bits";
        }

        var probe = Path.Combine(Path.GetTempPath(), $"humwatch-mode-probe-{Guid.NewGuid():N}");
        try
        {
            File.WriteAllText(probe, "x");
            File.SetUnixFileMode(probe, UnixFileMode.UserRead | UnixFileMode.GroupRead | UnixFileMode.OtherRead);
            try
            {
                using (new FileStream(probe, FileMode.Open, FileAccess.Write))
                {
                }

                return "a file of mode 0444 is still writable here (running as root), so it cannot be made read-only by its mode";
            }
            catch (UnauthorizedAccessException)
            {
                return null;
            }
        }
        finally
        {
            File.SetUnixFileMode(probe, UnixFileMode.UserRead | UnixFileMode.UserWrite);
            File.Delete(probe);
        }
    }
}
