using System.Text.Json;
using System.Text.Json.Nodes;
using HumWatch.Host.Configuration;
using Xunit;

namespace HumWatch.Host.Tests.Configuration;

/// <summary>appsettings.example.json lists the defaults, except the values it marks as examples.</summary>
public sealed class ExampleDefaultsTests
{
    private static readonly JsonSerializerOptions Reflection = new() { WriteIndented = false };

    [Fact]
    public void The_example_differs_from_the_built_in_defaults_only_where_its_comments_say_example()
    {
        var path = Path.Combine(RepositoryRoot(), "appsettings.example.json");
        var defaults = Flatten(SettingsBuilder.Build(SettingsSources.Isolated()));
        var example = Flatten(SettingsBuilder.Build(SettingsSources.Isolated(configFiles: [path])));

        var differing = defaults.Keys.Union(example.Keys)
            .Where(k => defaults.GetValueOrDefault(k) != example.GetValueOrDefault(k))
            .Select(k => string.Join(':', k.Split(':').TakeWhile(part => part != "count" && !int.TryParse(part, out _)))) // a list counts as one setting
            .Distinct()
            .Order(StringComparer.Ordinal)
            .ToList();

        Assert.Equal(["Analysis:Sources:SiteTones", "Instance:Name", "Notify:Webhooks", "Site:Name", "Site:TimeZone"], differing);
        var lines = File.ReadAllLines(path);
        foreach (var key in differing)
        {
            var leaf = key.Split(':')[^1];
            Assert.Contains(lines, l => l.Contains($"\"{leaf}\"", StringComparison.Ordinal) && l.Contains("// example", StringComparison.Ordinal));
        }
    }

    private static Dictionary<string, string> Flatten(BoundSettings settings)
    {
        var result = new Dictionary<string, string>(StringComparer.Ordinal);
        var root = JsonSerializer.SerializeToNode(settings, Reflection)!;

        // No endpoints configured means the one default PULL endpoint: compare what the service would bind.
        root["Ingest"]!["Endpoints"] = JsonSerializer.SerializeToNode(settings.Ingest.EffectiveEndpoints(), Reflection);
        Walk(root, "", result);
        return result;
    }

    private static void Walk(JsonNode? node, string prefix, Dictionary<string, string> into)
    {
        switch (node)
        {
            case JsonObject o:
                foreach (var (name, child) in o)
                {
                    Walk(child, prefix.Length == 0 ? name : $"{prefix}:{name}", into);
                }

                break;
            case JsonArray a:
                into[prefix + ":count"] = a.Count.ToString(System.Globalization.CultureInfo.InvariantCulture);
                for (var i = 0; i < a.Count; i++)
                {
                    Walk(a[i], $"{prefix}:{i}", into);
                }

                break;
            default:
                into[prefix] = node?.ToJsonString() ?? "null";
                break;
        }
    }

    private static string RepositoryRoot()
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
        {
            if (File.Exists(Path.Combine(dir.FullName, "HumWatch.sln")))
            {
                return dir.FullName;
            }
        }

        throw new InvalidOperationException("HumWatch.sln not found above the test output.");
    }
}
