namespace HumWatch.Fuzz;

/// <summary>One fuzzed entry point: feeds an input's bytes through a real public path of HumWatch.</summary>
internal interface IFuzzTarget
{
    /// <summary>Name on the command line and folder of its seeds.</summary>
    string Name { get; }

    /// <summary>
    /// Runs one input. A documented typed rejection returns normally (it is what bad input should get); anything else
    /// escapes as an exception, which afl-fuzz records as a crash.
    /// </summary>
    /// <returns>"accepted …" or "rejected: …", for replay.</returns>
    string Execute(byte[] input);
}

internal static class FuzzTargets
{
    public static IReadOnlyList<IFuzzTarget> All { get; } =
    [
        new RecordingTarget("edf", ".edf"),
        new RecordingTarget("bdf", ".bdf"),
        new RecordingTarget("csv", ".csv"),
        new WireTarget(),
        new SettingsTarget(),
    ];

    public static IFuzzTarget? Find(string name) => All.FirstOrDefault(t => t.Name == name);
}

/// <summary>A check of the harness failed: the input got through with a result that breaks a documented rule.</summary>
internal sealed class FuzzCheckFailedException(string message) : Exception(message);

/// <summary>The input as bytes; afl-fuzz hands it on stdin, at most 1 MiB by default.</summary>
internal static class InputBytes
{
    public static byte[] ReadAll(Stream stream)
    {
        using var copy = new MemoryStream();
        stream.CopyTo(copy);
        return copy.ToArray();
    }
}
