using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Http.Headers;
using System.Text;
using HumWatch.Host.Composition;
using HumWatch.Host.Configuration;
using HumWatch.Host.Tests.Web.Support;
using HumWatch.Host.Web;
using Xunit;

namespace HumWatch.Host.Tests.Web;

/// <summary>Who may read the page: loopback by default, off-host only with a credential, secrets never shown.</summary>
[Collection(LivePageCollection.Name)]
public sealed class AccessTests
{
    private const string Token = "wall-monitor-7f3a9c21";

    [Fact]
    public void Serving_beyond_loopback_without_a_credential_is_refused_naming_the_settings()
    {
        var noAllow = Assert.Throws<ConfigurationException>(() => Build(new() { ["Web:Endpoint"] = "http://0.0.0.0:5712" }));
        Assert.Contains("Web:Endpoint http://0.0.0.0:5712 is not a loopback address; set Web:AllowNonLoopback = true", noAllow.Message, StringComparison.Ordinal);

        var noToken = Assert.Throws<ConfigurationException>(() => Build(new() { ["Web:Endpoint"] = "http://*:5712", ["Web:AllowNonLoopback"] = "true" }));
        Assert.Contains("Web:Endpoint http://*:5712 is reachable from other hosts but no credential is set", noToken.Message, StringComparison.Ordinal);
        Assert.Contains("Set Web:AccessToken (at least 16 characters), or Web:User and Web:PasswordHash", noToken.Message, StringComparison.Ordinal);

        var shortToken = Assert.Throws<ConfigurationException>(() => Build(new() { ["Web:AccessToken"] = "short" }));
        Assert.Contains("Web:AccessToken must be at least 16 characters (got 5)", shortToken.Message, StringComparison.Ordinal);

        var lonelyUser = Assert.Throws<ConfigurationException>(() => Build(new() { ["Web:User"] = "lab" }));
        Assert.Contains("Web:User and Web:PasswordHash go together", lonelyUser.Message, StringComparison.Ordinal);

        var badHash = Assert.Throws<ConfigurationException>(() => Build(new() { ["Web:User"] = "lab", ["Web:PasswordHash"] = "md5:abc" }));
        Assert.Contains("Web:PasswordHash must look like pbkdf2-sha256:ITERATIONS:SALT:HASH", badHash.Message, StringComparison.Ordinal);

        var hurried = Assert.Throws<ConfigurationException>(() => Build(new() { ["Web:SilentAfterSeconds"] = "5", ["Publish:StatusIntervalSeconds"] = "10" }));
        Assert.Contains("Web:SilentAfterSeconds (5 s) must be longer than Publish:StatusIntervalSeconds (10 s)", hurried.Message, StringComparison.Ordinal);

        // With a token the same endpoint is accepted (not started here: no test listens beyond loopback).
        using var accepted = Build(new() { ["Web:Endpoint"] = "http://0.0.0.0:0", ["Web:AllowNonLoopback"] = "true", ["Web:AccessToken"] = Token });
    }

    [Fact]
    public async Task With_a_token_every_request_but_the_health_probe_needs_it_and_the_settings_hide_it()
    {
        using var folder = new TempFolder();
        var hash = PasswordCheck.Hash("correct horse battery", PasswordCheck.MinIterations);
        await using var page = await LivePage.StartAsync(folder.Path, new Dictionary<string, string?>
        {
            ["Web:AccessToken"] = Token,
            ["Web:User"] = "lab",
            ["Web:PasswordHash"] = hash,
        });
        using var plain = new HttpClient(new HttpClientHandler { AllowAutoRedirect = false, UseCookies = false }) { BaseAddress = new Uri(page.Address) };

        using (var refused = await plain.GetAsync("/api/v1/rooms"))
        {
            Assert.Equal(HttpStatusCode.Unauthorized, refused.StatusCode);
            Assert.Equal("Basic", refused.Headers.WwwAuthenticate.Single().Scheme);
        }

        using (var health = await plain.GetAsync("/healthz"))
        {
            Assert.Equal(HttpStatusCode.OK, health.StatusCode);
        }

        Assert.Equal(HttpStatusCode.OK, await Status(plain, "/readyz", new AuthenticationHeaderValue("Bearer", Token)));
        Assert.Equal(HttpStatusCode.Unauthorized, await Status(plain, "/metrics", new AuthenticationHeaderValue("Bearer", Token + "x")));
        Assert.Equal(HttpStatusCode.OK, await Status(plain, "/api/v1/rooms", Basic("lab", "correct horse battery")));
        Assert.Equal(HttpStatusCode.Unauthorized, await Status(plain, "/api/v1/rooms", Basic("lab", "wrong horse")));
        Assert.Equal(HttpStatusCode.Unauthorized, await Status(plain, "/api/v1/rooms", Basic("visitor", "correct horse battery")));

        // A browser opens the page once with ?token=: it gets a cookie (a hash, not the token) and an address without the token.
        using var first = new HttpRequestMessage(HttpMethod.Get, $"/room/room-a?token={Token}");
        using var redirected = await plain.SendAsync(first);
        Assert.Equal(HttpStatusCode.Redirect, redirected.StatusCode);
        Assert.Equal("/room/room-a", redirected.Headers.Location?.OriginalString);
        var cookie = redirected.Headers.GetValues("Set-Cookie").Single();
        Assert.StartsWith(Access.CookieName + "=", cookie, StringComparison.Ordinal);
        Assert.Contains("httponly", cookie, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain(Token, cookie, StringComparison.Ordinal);
        using var withCookie = new HttpRequestMessage(HttpMethod.Get, "/api/v1/site");
        withCookie.Headers.Add("Cookie", cookie.Split(';')[0]);
        using (var site = await plain.SendAsync(withCookie))
        {
            Assert.Equal(HttpStatusCode.OK, site.StatusCode);
        }

        using var settingsRequest = new HttpRequestMessage(HttpMethod.Get, "/api/v1/settings");
        settingsRequest.Headers.Authorization = new AuthenticationHeaderValue("Bearer", Token);
        using var settings = await plain.SendAsync(settingsRequest);
        var text = await settings.Content.ReadAsStringAsync();
        Assert.DoesNotContain(Token, text, StringComparison.Ordinal);
        Assert.DoesNotContain(hash.Split(':')[3], text, StringComparison.Ordinal);
        using var json = System.Text.Json.JsonDocument.Parse(text);
        var web = json.RootElement.GetProperty("Web");
        Assert.Equal(SettingsView.Hidden, web.GetProperty("AccessToken").GetString());
        Assert.Equal(SettingsView.Hidden, web.GetProperty("PasswordHash").GetString());
        Assert.Equal("lab", web.GetProperty("User").GetString());
        Assert.Equal(1, json.RootElement.GetProperty("Publish").GetProperty("StatusIntervalSeconds").GetDouble());

        // Read-only.
        using var post = new HttpRequestMessage(HttpMethod.Post, "/api/v1/rooms") { Content = new StringContent("{}") };
        post.Headers.Authorization = new AuthenticationHeaderValue("Bearer", Token);
        using var posted = await plain.SendAsync(post);
        Assert.Equal(HttpStatusCode.MethodNotAllowed, posted.StatusCode);
    }

    [Fact]
    public void Secret_names_and_urls_with_credentials_are_hidden_from_the_settings_view()
    {
        Assert.True(SettingsView.IsSecretName("AccessToken"));
        Assert.True(SettingsView.IsSecretName("SmtpPassword"));
        Assert.True(SettingsView.IsSecretName("ClientSecret"));
        Assert.True(SettingsView.IsSecretName("PasswordHash"));
        Assert.False(SettingsView.IsSecretName("ServerKeyFile"));
        Assert.False(SettingsView.IsSecretName("Endpoint"));

        Assert.Equal("https://hooks.example.org/…", SettingsView.WithoutUrlSecrets("https://hooks.example.org/services/T00/B00/XXXXsecret?key=1"));
        Assert.Equal("http://alerts.lab.example:8080/…", SettingsView.WithoutUrlSecrets("http://user:pw@alerts.lab.example:8080/"));
        Assert.Null(SettingsView.WithoutUrlSecrets("http://127.0.0.1:5712"));
        Assert.Null(SettingsView.WithoutUrlSecrets("tcp://127.0.0.1:5711"));
    }

    /// <summary>Python's hashlib.pbkdf2_hmac (RFC 8018 PBKDF2) makes and checks the same hashes: an outside reference for PasswordCheck.</summary>
    [StandardPythonFact]
    public async Task Password_hashes_agree_with_python_hashlib_pbkdf2()
    {
        const string script = """
            import base64, hashlib, sys
            password, salt_b64, iterations = sys.argv[1], sys.argv[2], int(sys.argv[3])
            digest = hashlib.pbkdf2_hmac("sha256", password.encode(), base64.b64decode(salt_b64), iterations)
            print(base64.b64encode(digest).decode())
            """;
        var ours = PasswordCheck.Hash("lab wall 42", PasswordCheck.MinIterations);
        var parts = ours.Split(':');
        var theirs = await Python(script, "lab wall 42", parts[2], parts[1]);
        Assert.Equal(parts[3], theirs);

        var salt = Convert.ToBase64String(Encoding.ASCII.GetBytes("sixteen byte salt"));
        var fromPython = $"pbkdf2-sha256:{PasswordCheck.MinIterations.ToString(CultureInfo.InvariantCulture)}:{salt}:{await Python(script, "other secret", salt, "100000")}";
        Assert.True(PasswordCheck.Verify("other secret", fromPython));
        Assert.False(PasswordCheck.Verify("other secreT", fromPython));
    }

    private static async Task<string> Python(string script, params string[] arguments)
    {
        var info = new ProcessStartInfo("/usr/bin/python3") { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        info.ArgumentList.Add("-c");
        info.ArgumentList.Add(script);
        foreach (var argument in arguments)
        {
            info.ArgumentList.Add(argument);
        }

        using var process = Process.Start(info)!;
        var output = await process.StandardOutput.ReadToEndAsync();
        await process.WaitForExitAsync();
        Assert.True(process.ExitCode == 0, await process.StandardError.ReadToEndAsync());
        return output.Trim();
    }

    private static async Task<HttpStatusCode> Status(HttpClient client, string path, AuthenticationHeaderValue authorization)
    {
        using var request = new HttpRequestMessage(HttpMethod.Get, path);
        request.Headers.Authorization = authorization;
        using var response = await client.SendAsync(request);
        return response.StatusCode;
    }

    private static AuthenticationHeaderValue Basic(string user, string password) =>
        new("Basic", Convert.ToBase64String(Encoding.UTF8.GetBytes($"{user}:{password}")));

    private static Microsoft.Extensions.Hosting.IHost Build(Dictionary<string, string?> web)
    {
        using var folder = new TempFolder();
        var settings = EndToEnd.ServiceUnderTest.Settings(folder.Path);
        settings["Web:Enabled"] = "true";
        foreach (var (key, value) in web)
        {
            settings[key] = value;
        }

        return HumWatchHost.Build(new HumWatchHostSettings { Sources = SettingsSources.Isolated(settings) });
    }
}
