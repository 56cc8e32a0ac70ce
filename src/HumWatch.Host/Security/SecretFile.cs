namespace HumWatch.Host.Security;

/// <summary>
/// Files that hold one secret (an SMTP password, a webhook token): read once at start, trimmed, and refused when other
/// users can read them, as secret key files are (<see cref="CurveKeyFile.EnsureOwnerOnly"/>). The secret itself never
/// appears in a message.
/// </summary>
internal static class SecretFile
{
    /// <summary>The file's content without surrounding white space.</summary>
    /// <param name="path">The file.</param>
    /// <param name="settingKey">The setting that names the file, for the message.</param>
    /// <exception cref="StartFailureException">Missing, unreadable, empty, or readable by its group or other users; the message names the setting, the file and the fix.</exception>
    public static string Read(string path, string settingKey)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(path);
        string text;
        try
        {
            if (!OperatingSystem.IsWindows() && CurveKeyFile.IsReadableByOthers(path))
            {
                var mode = Convert.ToString((int)File.GetUnixFileMode(path), 8).PadLeft(4, '0');
                throw new StartFailureException(
                    $"{settingKey} '{path}' holds a secret but has mode {mode}, readable by its group or other users; " +
                    $"restrict it to the service account with `chmod 600 {path}`.");
            }

            text = File.ReadAllText(path).Trim();
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new StartFailureException($"{settingKey} '{path}' cannot be read: {ex.Message}", ex);
        }

        return text.Length > 0 ? text : throw new StartFailureException($"{settingKey} '{path}' is empty; it must hold the secret.");
    }
}
