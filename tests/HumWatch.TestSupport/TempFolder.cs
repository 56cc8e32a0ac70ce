namespace HumWatch.TestSupport;

/// <summary>A fresh folder under the system temp path, deleted with everything in it on dispose.</summary>
public sealed class TempFolder : IDisposable
{
    public TempFolder()
    {
        Path = System.IO.Path.Combine(System.IO.Path.GetTempPath(), "humwatch-tests-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(Path);
    }

    public string Path { get; }

    /// <summary>The full path of <paramref name="name"/> inside the folder (not created).</summary>
    public string File(string name) => System.IO.Path.Combine(Path, name);

    /// <summary>Writes <paramref name="bytes"/> to <paramref name="name"/> and returns its full path.</summary>
    public string Write(string name, byte[] bytes)
    {
        var path = File(name);
        System.IO.File.WriteAllBytes(path, bytes);
        return path;
    }

    /// <summary>Writes <paramref name="text"/> (UTF-8, no byte-order mark) to <paramref name="name"/> and returns its full path.</summary>
    public string WriteText(string name, string text)
    {
        var path = File(name);
        System.IO.File.WriteAllText(path, text);
        return path;
    }

    public void Dispose()
    {
        try
        {
            Directory.Delete(Path, recursive: true);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            // Best effort: a file still open on Windows must not fail a test; the OS temp cleaner gets it.
        }
    }
}
