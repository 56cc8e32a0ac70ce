using System.Buffers.Binary;
using System.Text.Json;

namespace HumWatch.Core.Tests.Spectra;

/// <summary>Reads tests/fixtures/scipy (scipy 1.10.1 signal.welch outputs, see the README there).</summary>
internal static class ScipyWelchFixtures
{
    public static string Folder => Path.Combine(AppContext.BaseDirectory, "fixtures", "scipy");

    public static IReadOnlyList<WelchCase> LoadAll()
    {
        using var document = JsonDocument.Parse(File.ReadAllText(Path.Combine(Folder, "welch_index.json")));
        var root = document.RootElement;
        var cases = new List<WelchCase>();
        foreach (var item in root.GetProperty("cases").EnumerateArray())
        {
            var name = item.GetProperty("name").GetString()!;
            cases.Add(new WelchCase(
                name,
                item.GetProperty("sampleRateHz").GetDouble(),
                item.GetProperty("nperseg").GetInt32(),
                item.GetProperty("noverlap").GetInt32(),
                item.GetProperty("segments").GetInt32(),
                ReadFloats(Path.Combine(Folder, name + ".input.f32")),
                ReadDoubles(Path.Combine(Folder, name + ".psd.f64")),
                root.GetProperty("scipy").GetString()!));
        }

        return cases;
    }

    public static WelchCase Load(string name) => LoadAll().Single(c => c.Name == name);

    public static IEnumerable<object[]> CaseNames() => LoadAll().Select(c => new object[] { c.Name });

    private static float[] ReadFloats(string path)
    {
        var bytes = File.ReadAllBytes(path);
        var values = new float[bytes.Length / 4];
        for (var i = 0; i < values.Length; i++)
        {
            values[i] = BinaryPrimitives.ReadSingleLittleEndian(bytes.AsSpan(i * 4, 4));
        }

        return values;
    }

    private static double[] ReadDoubles(string path)
    {
        var bytes = File.ReadAllBytes(path);
        var values = new double[bytes.Length / 8];
        for (var i = 0; i < values.Length; i++)
        {
            values[i] = BinaryPrimitives.ReadDoubleLittleEndian(bytes.AsSpan(i * 8, 8));
        }

        return values;
    }
}

internal sealed record WelchCase(
    string Name,
    double SampleRateHz,
    int SegmentLength,
    int OverlapSamples,
    int Segments,
    float[] Input,
    double[] ScipyPsd,
    string ScipyVersion)
{
    public double[] InputAsDouble() => Input.Select(v => (double)v).ToArray();
}
