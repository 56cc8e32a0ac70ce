namespace HumWatch.Core.Text;

/// <summary>
/// Joins the key prefix a caller passes to an options class's <c>Validate</c> with the setting's own name. Core knows no
/// configuration keys: the Host passes the section it bound the options from, and without one a message names the
/// property alone.
/// </summary>
public static class SettingPrefix
{
    /// <summary>"<paramref name="prefix"/>:" for a non-empty prefix, else an empty string.</summary>
    public static string Of(string? prefix) => string.IsNullOrEmpty(prefix) ? string.Empty : prefix + ":";
}
