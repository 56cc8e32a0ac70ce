using System.Globalization;
using HumWatch.Cli.Commands;
using HumWatch.Core.Reporting;
using HumWatch.Host.Configuration;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>
/// `check` reads the same layers as `run`, in the same order, with --mains on top. A "staircase": layer i sets every
/// check limit from limit i up, so limit i's value shows that layer i beats every layer below it. The environment and
/// the working directory are handed in, never set on this process.
/// </summary>
public sealed class CheckSettingsTests : IDisposable
{
    // Layers 1..5: ./appsettings.json, first --config, second --config, HUMWATCH_ environment, --set.
    // Row = layer, column = limit; each limit keeps Warn <= Fail at every layer so all combinations validate.
    private static readonly string[] Keys = ["Check:MinLineSeconds", "Analysis:Tracking:PersistFrames", "Check:FailFaultFraction", "Check:WarnLineUvRms", "Check:FailLineUvRms"];
    private static readonly double[][] Values =
    [
        [11, 4, 0.6, 1.5, 6],
        [0, 5, 0.7, 2, 7],
        [0, 0, 0.8, 2.5, 8],
        [0, 0, 0, 3, 9],
        [0, 0, 0, 0, 10],
    ];

    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void Each_layer_wins_over_every_layer_below_it()
    {
        Write("appsettings.json", LayerJson(0));
        Write("first.json", LayerJson(1));
        Write("second.json", LayerJson(2));
        var environment = Layer(3).ToDictionary(kv => "HUMWATCH_" + kv.Key.Replace(":", "__", StringComparison.Ordinal), kv => (string?)kv.Value);
        var settings = Layer(4).Select(kv => $"{kv.Key}={kv.Value}").ToArray();

        var bound = Bind(["first.json", "second.json"], settings, mains: null, environment);
        var limits = bound.Check;

        // Limit i comes from layer i (the diagonal); each beat the option class default, the lowest layer.
        double[] expected = [11, 5, 0.8, 3, 10];
        double[] actual = [limits.MinLineSeconds, bound.Analysis.Tracking.PersistFrames, limits.FailFaultFraction, limits.WarnLineUvRms, limits.FailLineUvRms];
        Assert.Equal(expected, actual);
        Assert.NotEqual(new CheckLimits().MinLineSeconds, limits.MinLineSeconds);
    }

    [Fact]
    public void Mains_beats_set_which_beats_the_environment()
    {
        var environment = new Dictionary<string, string?> { ["HUMWATCH_Analysis__Sources__MainsHz"] = "60" };

        Assert.Equal(60, Bind([], [], mains: null, environment).Analysis.Sources.MainsHz);
        Assert.Equal(50, Bind([], ["Analysis:Sources:MainsHz=50"], mains: null, environment).Analysis.Sources.MainsHz);
        Assert.Equal(60, Bind([], ["analysis:sources:mainshz=50"], mains: 60, environment).Analysis.Sources.MainsHz);
    }

    [Fact]
    public void A_set_without_a_value_is_refused_naming_itself()
    {
        using var stderr = new StringWriter();

        var sources = CheckCommand.Sources([], ["Check:WarnLineUvRms"], mains: null, stderr);

        Assert.Null(sources);
        Assert.Contains("'Check:WarnLineUvRms'", stderr.ToString(), StringComparison.Ordinal);
    }

    private BoundSettings Bind(string[] configFiles, string[] settings, int? mains, Dictionary<string, string?> environment)
    {
        var sources = CheckCommand.Sources(configFiles, settings, mains, TextWriter.Null) ?? throw new InvalidOperationException("bad --set");
        return SettingsBuilder.Build(sources with { BaseDirectory = _folder.Path, Environment = environment });
    }

    private static Dictionary<string, string> Layer(int row) =>
        Enumerable.Range(row, Keys.Length - row).ToDictionary(column => Keys[column], column => Values[row][column].ToString(CultureInfo.InvariantCulture));

    // Keys of any depth ("Analysis:Tracking:PersistFrames") become nested objects.
    private static string LayerJson(int row)
    {
        var root = new System.Text.Json.Nodes.JsonObject();
        foreach (var (key, value) in Layer(row))
        {
            var parts = key.Split(':');
            var node = root;
            foreach (var part in parts[..^1])
            {
                node = (System.Text.Json.Nodes.JsonObject)(node[part] ??= new System.Text.Json.Nodes.JsonObject());
            }

            node[parts[^1]] = double.Parse(value, CultureInfo.InvariantCulture);
        }

        return root.ToJsonString();
    }

    private void Write(string name, string json) => File.WriteAllText(Path.Combine(_folder.Path, name), json);
}
