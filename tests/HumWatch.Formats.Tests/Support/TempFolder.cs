namespace HumWatch.Formats.Tests.Support;

/// <summary>A private temp folder removed on dispose.</summary>
public sealed class TempFolder : IDisposable
{
    public TempFolder()
    {
        FullPath = Path.Combine(Path.GetTempPath(), "humwatch-formats-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(FullPath);
    }

    public string FullPath { get; }

    public string File(string name) => Path.Combine(FullPath, name);

    public string Write(string name, byte[] bytes)
    {
        var path = File(name);
        System.IO.File.WriteAllBytes(path, bytes);
        return path;
    }

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
            Directory.Delete(FullPath, recursive: true);
        }
        catch (IOException)
        {
            // A reader still open on Windows; the OS temp cleaner gets it.
        }
    }
}
