using System.Globalization;

namespace HumWatch.Formats.Tests.Support;

/// <summary>The committed reference files in tests/fixtures (copied next to the test assembly).</summary>
public static class Fixtures
{
    public static string Edf(string name) => Path.Combine(AppContext.BaseDirectory, "fixtures", "edf", name);

    public static string Csv(string name) => Path.Combine(AppContext.BaseDirectory, "fixtures", "csv", name);

    /// <summary>An input the fuzzing harness found (tests/fixtures/fuzz/README.md), by target folder and name.</summary>
    public static string Fuzz(string target, string name) => Path.Combine(AppContext.BaseDirectory, "fixtures", "fuzz", target, name);
}

/// <summary>One signal of a libedf readback dump.</summary>
public sealed record LibedfSignal(string Label, string Dimension, double PhysicalMin, double PhysicalMax, string Prefilter, double[] Values);

/// <summary>An annotation as libedf reports it (onset in 100 ns units, duration text or null).</summary>
public sealed record LibedfAnnotation(long Onset100Ns, string? Duration, string Text);

/// <summary>Parsed <c>&lt;file&gt;.libedf.txt</c> (format in tests/fixtures/edf/README.md).</summary>
public sealed class LibedfDump
{
    public int FileType { get; private set; }

    public long DataRecords { get; private set; }

    public long RecordDuration100Ns { get; private set; }

    public DateTime Start { get; private set; }

    public List<LibedfSignal> Signals { get; } = [];

    public List<LibedfAnnotation> Annotations { get; } = [];

    public static LibedfDump Load(string path)
    {
        var dump = new LibedfDump();
        var lines = File.ReadAllLines(path);
        var i = 0;
        while (i < lines.Length)
        {
            var parts = lines[i].Split('\t');
            switch (parts[0])
            {
                case "filetype":
                    dump.FileType = int.Parse(parts[1], CultureInfo.InvariantCulture);
                    break;
                case "datarecords":
                    dump.DataRecords = long.Parse(parts[1], CultureInfo.InvariantCulture);
                    break;
                case "datarecord_duration_100ns":
                    dump.RecordDuration100Ns = long.Parse(parts[1], CultureInfo.InvariantCulture);
                    break;
                case "start":
                    dump.Start = DateTime.ParseExact(parts[1], "yyyy-MM-ddTHH:mm:ss", CultureInfo.InvariantCulture);
                    break;
                case "signal":
                    var n = int.Parse(parts[2], CultureInfo.InvariantCulture);
                    var values = new double[n];
                    for (var k = 0; k < n; k++)
                    {
                        values[k] = double.Parse(lines[i + 1 + k], CultureInfo.InvariantCulture);
                    }

                    dump.Signals.Add(new LibedfSignal(parts[1].Trim(), parts[3].Trim(), double.Parse(parts[4], CultureInfo.InvariantCulture), double.Parse(parts[5], CultureInfo.InvariantCulture), parts[6].Trim(), values));
                    i += n;
                    break;
                case "annotation":
                    dump.Annotations.Add(new LibedfAnnotation(long.Parse(parts[1], CultureInfo.InvariantCulture), parts[2] == "-" ? null : parts[2], parts[3]));
                    break;
                default:
                    break;
            }

            i++;
        }

        return dump;
    }
}
