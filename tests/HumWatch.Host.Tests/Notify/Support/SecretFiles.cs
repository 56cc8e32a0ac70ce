namespace HumWatch.Host.Tests.Notify.Support;

internal static class SecretFiles
{
    /// <summary>Mode 600, as a secret file should be (Windows has no mode bits).</summary>
    public static void OwnerOnly(string path)
    {
        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(path, UnixFileMode.UserRead | UnixFileMode.UserWrite);
        }
    }
}
