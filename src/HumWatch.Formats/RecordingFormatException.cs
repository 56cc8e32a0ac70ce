namespace HumWatch.Formats;

/// <summary>A recording cannot be read; the message is "&lt;path&gt;: &lt;problem&gt;".</summary>
public sealed class RecordingFormatException : Exception
{
    public RecordingFormatException()
        : this(string.Empty, "unreadable recording")
    {
    }

    public RecordingFormatException(string message)
        : this(string.Empty, message)
    {
    }

    public RecordingFormatException(string message, Exception innerException)
        : this(string.Empty, message, innerException)
    {
    }

    public RecordingFormatException(string path, string problem, Exception? innerException = null)
        : base(string.IsNullOrEmpty(path) ? problem : path + ": " + problem, innerException)
    {
        Path = path;
        Problem = problem;
    }

    /// <summary>The file that could not be read.</summary>
    public string Path { get; }

    /// <summary>The problem without the path.</summary>
    public string Problem { get; }
}
