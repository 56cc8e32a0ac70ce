using System.Diagnostics;

namespace HumWatch.Fuzz;

/// <summary>Runs saved inputs (a crash afl-fuzz kept, a seed folder) outside afl-fuzz, one line per input.</summary>
internal static class Replay
{
    public static int Run(IFuzzTarget target, IEnumerable<string> paths)
    {
        var crashes = 0;
        var files = paths.SelectMany(p => Directory.Exists(p) ? Directory.EnumerateFiles(p).Order(StringComparer.Ordinal) : (IEnumerable<string>)[p]);
        foreach (var file in files)
        {
            var input = File.ReadAllBytes(file);
            var watch = Stopwatch.StartNew();
            try
            {
                var outcome = target.Execute(input);
                Console.WriteLine($"{Path.GetFileName(file)} ({input.Length} B, {watch.Elapsed.TotalMilliseconds:0.0} ms): {Shorten(outcome)}");
            }
#pragma warning disable CA1031 // Every other exception is what the replay is there to show.
            catch (Exception ex)
#pragma warning restore CA1031
            {
                crashes++;
                Console.WriteLine($"{Path.GetFileName(file)} ({input.Length} B): CRASH {ex}");
            }
        }

        return crashes == 0 ? 0 : 1;
    }

    private static string Shorten(string text) => text.Length > 300 ? text[..300] + "…" : text.ReplaceLineEndings(" | ");
}
