using System.Net.Http.Json;
using System.Text.Json;
using HumWatch.Host.Composition;
using HumWatch.Host.Tests.EndToEnd;
using Xunit;

namespace HumWatch.Host.Tests.Web.Support;

/// <summary>The tests that start a host with the live page share one collection: the page's meter is read by name, so two such hosts at once would see each other's figures.</summary>
[CollectionDefinition(Name)]
public sealed class LivePageCollection
{
    public const string Name = "live page";
}

/// <summary>The real service with its page on an ephemeral loopback port, and an HTTP client pointed at it.</summary>
internal sealed class LivePage : IAsyncDisposable
{
    private LivePage(ServiceUnderTest service, string address)
    {
        Service = service;
        Address = address;
        Http = new HttpClient { BaseAddress = new Uri(address), Timeout = TimeSpan.FromSeconds(30) };
    }

    public ServiceUnderTest Service { get; }

    /// <summary>http://127.0.0.1:PORT/ as bound.</summary>
    public string Address { get; }

    public HttpClient Http { get; }

    public static async Task<LivePage> StartAsync(string folder, IReadOnlyDictionary<string, string?>? extra = null)
    {
        var settings = new Dictionary<string, string?>
        {
            ["Web:Enabled"] = "true",
            ["Web:Endpoint"] = "http://127.0.0.1:0",
            ["Web:SilentAfterSeconds"] = "3",
            ["Summaries:Folder"] = Path.Combine(folder, "summaries"),
        };
        foreach (var (key, value) in extra ?? new Dictionary<string, string?>())
        {
            settings[key] = value;
        }

        var service = await ServiceUnderTest.StartAsync(folder, settings);
        var address = HumWatchHost.WebAddress(service.Host) ?? throw new InvalidOperationException("The host has no live page.");
        return new LivePage(service, address);
    }

    public async Task<JsonElement> GetJsonAsync(string path)
    {
        using var response = await Http.GetAsync(path);
        var text = await response.Content.ReadAsStringAsync();
        Assert.True(response.IsSuccessStatusCode, $"GET {path}: {(int)response.StatusCode} {text}");
        Assert.StartsWith("application/json", response.Content.Headers.ContentType?.ToString(), StringComparison.Ordinal);
        return JsonDocument.Parse(text).RootElement.Clone();
    }

    /// <summary>Polls a JSON resource until <paramref name="match"/> holds (bounded); returns the matching body.</summary>
    public async Task<JsonElement> WaitForJsonAsync(string path, Func<JsonElement, bool> match, string what, int timeoutSeconds = 60)
    {
        var deadline = DateTime.UtcNow.AddSeconds(timeoutSeconds);
        JsonElement last = default;
        while (DateTime.UtcNow < deadline)
        {
            using var response = await Http.GetAsync(path);
            if (response.IsSuccessStatusCode)
            {
                last = JsonDocument.Parse(await response.Content.ReadAsStringAsync()).RootElement.Clone();
                if (match(last))
                {
                    return last;
                }
            }

            await Task.Delay(100);
        }

        throw new TimeoutException($"GET {path} did not show {what} within {timeoutSeconds} s; last: {last.GetRawText()}");
    }

    public static JsonElement? Room(JsonElement rooms, string stream) =>
        rooms.GetProperty("rooms").EnumerateArray().Where(r => r.GetProperty("stream").GetString() == stream).Cast<JsonElement?>().FirstOrDefault();

    public async ValueTask DisposeAsync()
    {
        Http.Dispose();
        await Service.DisposeAsync();
    }
}
