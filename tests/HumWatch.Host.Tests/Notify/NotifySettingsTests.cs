using HumWatch.Host.Composition;
using HumWatch.Host.Configuration;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Notify;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Xunit;

namespace HumWatch.Host.Tests.Notify;

/// <summary>The "Notify" settings: off by default, and every unsafe or incomplete choice refused at start, naming its key.</summary>
public sealed class NotifySettingsTests
{
    private static readonly Dictionary<string, string?> MailBasics = new()
    {
        ["Notify:Mail:Enabled"] = "true",
        ["Notify:Mail:Host"] = "smtp.lab.example",
        ["Notify:Mail:From"] = "HumWatch <humwatch@lab.example>",
        ["Notify:Mail:To:0"] = "eeg-tech@lab.example",
    };

    [Fact]
    public void By_default_nothing_is_sent_and_nothing_is_registered()
    {
        var bound = Bind([]);

        Assert.False(bound.Notify.AnyEnabled);
        Assert.Empty(bound.Notify.Webhooks);
        Assert.False(bound.Notify.Mail.Enabled);
        Assert.True(bound.Notify.Mail.StartTls);
        Assert.Equal(120, bound.Notify.Mail.BatchSeconds);
        var services = new ServiceCollection().AddHumWatchNotify(bound.Notify, bound.Site);
        Assert.DoesNotContain(services, d => d.ServiceType == typeof(IDispatchSink) || d.ServiceType == typeof(NotificationService));
    }

    [Fact]
    public void Plain_http_to_another_host_needs_the_insecure_flag_by_name_and_loopback_does_not()
    {
        var errors = Errors(new() { ["Notify:Webhooks:0:Url"] = "http://alerts.lab.example/hook?key=abc123" });

        var error = Assert.Single(errors);
        Assert.Contains("Notify:Webhooks:0:AllowInsecureHttp = true", error, StringComparison.Ordinal);
        Assert.Contains("http://alerts.lab.example/hook?…", error, StringComparison.Ordinal);
        Assert.DoesNotContain("abc123", error, StringComparison.Ordinal);

        Assert.True(Bind(new() { ["Notify:Webhooks:0:Url"] = "http://alerts.lab.example/hook", ["Notify:Webhooks:0:AllowInsecureHttp"] = "true" }).Notify.AnyEnabled);
        Assert.True(Bind(new() { ["Notify:Webhooks:0:Url"] = "http://127.0.0.1:8080/hook" }).Notify.AnyEnabled);
        Assert.True(Bind(new() { ["Notify:Webhooks:0:Url"] = "https://alerts.lab.example/hook" }).Notify.AnyEnabled);
    }

    [Fact]
    public void Kinds_are_read_as_a_list_of_names_in_any_case()
    {
        var bound = Bind(new() { ["Notify:Webhooks:0:Url"] = "https://alerts.lab.example/hook", ["Notify:Webhooks:0:Kinds"] = "clear, summary" });

        Assert.Equal(NotifyKinds.Clear | NotifyKinds.Summary, Assert.Single(bound.Notify.Webhooks).Kinds);
        Assert.Contains("Notify:Webhooks:0:Kinds", Assert.Single(Errors(new() { ["Notify:Webhooks:0:Url"] = "https://a.lab.example/", ["Notify:Webhooks:0:Kinds"] = "alarm" })), StringComparison.Ordinal);
        Assert.Contains("Notify:Webhooks:0:Kinds must name one or more", Assert.Single(Errors(new() { ["Notify:Webhooks:0:Url"] = "https://a.lab.example/", ["Notify:Webhooks:0:Kinds"] = "None" })), StringComparison.Ordinal);
    }

    [Fact]
    public void A_header_without_its_token_file_and_a_bad_url_or_severity_are_each_named()
    {
        var errors = Errors(new()
        {
            ["Notify:Webhooks:0:Url"] = "ftp://files.lab.example/",
            ["Notify:Webhooks:0:HeaderName"] = "Authorization",
            ["Notify:Webhooks:0:MinimumSeverity"] = "None",
            ["Notify:Webhooks:0:TimeoutSeconds"] = "0",
        });

        Assert.Equal(4, errors.Count);
        Assert.Contains(errors, e => e.StartsWith("Notify:Webhooks:0:Url must be an absolute http:// or https:// address", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Notify:Webhooks:0:HeaderName and Notify:Webhooks:0:TokenFile go together", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Notify:Webhooks:0:MinimumSeverity must be Minor, Marked or Severe", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Notify:Webhooks:0:TimeoutSeconds must be between 1 and 300 s", StringComparison.Ordinal));
    }

    [Fact]
    public void Mail_without_STARTTLS_needs_the_insecure_flag_by_name_and_never_sends_a_password_that_way()
    {
        var noTls = new Dictionary<string, string?>(MailBasics) { ["Notify:Mail:StartTls"] = "false" };
        Assert.Contains("set Notify:Mail:AllowInsecureNoTls = true", Assert.Single(Errors(noTls)), StringComparison.Ordinal);

        noTls["Notify:Mail:AllowInsecureNoTls"] = "true";
        Assert.True(Bind(noTls).Notify.Mail.Enabled);

        noTls["Notify:Mail:User"] = "humwatch";
        noTls["Notify:Mail:PasswordFile"] = "/etc/humwatch/smtp.password";
        Assert.Contains("the password would be sent unencrypted", Assert.Single(Errors(noTls)), StringComparison.Ordinal);
    }

    [Fact]
    public void Incomplete_mail_settings_are_each_named()
    {
        var errors = Errors(new()
        {
            ["Notify:Mail:Enabled"] = "true",
            ["Notify:Mail:From"] = "not an address",
            ["Notify:Mail:User"] = "humwatch",
            ["Notify:Mail:TrustedCertificateSha256"] = "AB:CD",
            ["Notify:Mail:BatchSeconds"] = "-1",
        });

        Assert.Contains(errors, e => e.StartsWith("Notify:Mail:Host must name the SMTP server", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Notify:Mail:From must be one mail address", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Notify:Mail:To must list at least one recipient", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Notify:Mail:User needs its password from exactly one of", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Notify:Mail:TrustedCertificateSha256 must be 64 hexadecimal digits", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Notify:Mail:BatchSeconds must be between 0 and 86400 s", StringComparison.Ordinal));
        Assert.Equal(6, errors.Count);
    }

    [Fact]
    public void Retry_limits_are_checked_together()
    {
        var errors = Errors(new() { ["Notify:Retry:Attempts"] = "0", ["Notify:Retry:FirstDelaySeconds"] = "10", ["Notify:Retry:MaxDelaySeconds"] = "5" });

        Assert.Equal(
            ["Notify:Retry:Attempts must be between 1 and 20 (got 0).", "Notify:Retry:MaxDelaySeconds (5 s) must be at least Notify:Retry:FirstDelaySeconds (10 s)."],
            errors);
    }

    [Fact]
    public void With_a_webhook_the_host_starts_notifications_before_and_stops_them_after_everything_that_raises_alerts()
    {
        using var temp = new TempFolder();
        var settings = new Dictionary<string, string?>
        {
            ["Ingest:Endpoints:0:Address"] = "tcp://127.0.0.1:*",
            ["Publish:Endpoint"] = "tcp://127.0.0.1:*",
            ["Store:Path"] = temp.File("humwatch.db"),
            ["Logs:Folder"] = temp.File("logs"),
            ["Inbox:Folder"] = temp.File("inbox"),
            ["Inbox:ArchiveFolder"] = temp.File("archive"),
            ["Inbox:RejectedFolder"] = temp.File("rejected"),
            ["Summaries:Folder"] = temp.File("summaries"),
            ["Notify:Webhooks:0:Url"] = "http://127.0.0.1:9/hook",
        };
        using var host = HumWatchHost.Build(new HumWatchHostSettings { Sources = SettingsSources.Isolated(settings) });

        var hosted = host.Services.GetServices<IHostedService>().Select(s => s.GetType()).ToList();

        // The store's health and the log folder's guard start before everything else (HumWatchHostTests has the whole order).
        Assert.Equal([typeof(StoreHealth), typeof(LogFolderGuard), typeof(LedgerWriter), typeof(NotificationService), typeof(HumWatch.Host.Fleet.InstanceHeartbeat), typeof(StreamMonitorService)], hosted.Take(6));
        Assert.Same(host.Services.GetRequiredService<NotificationService>(), Assert.Single(host.Services.GetServices<IDispatchSink>()));
        Assert.NotNull(host.Services.GetRequiredService<AlertDispatcher>());
    }

    [Fact]
    public void Every_notify_setting_is_in_the_settings_table_of_its_page()
    {
        var page = File.ReadAllText(Path.Combine(RepositoryRoot(), "docs", "notifications.md"));
        var keys = SettingsSchema.KnownKeys()
            .Where(k => k.StartsWith("Notify:", StringComparison.Ordinal))
            .Select(k => k["Notify:".Length..].Replace(":*:", ":<n>:", StringComparison.Ordinal).Replace(":*", "", StringComparison.Ordinal))
            .ToList();

        Assert.Equal(29, keys.Count);
        Assert.All(keys, key => Assert.Contains($"| `{key}` |", page, StringComparison.Ordinal));
    }

    private static string RepositoryRoot()
    {
        var folder = new DirectoryInfo(AppContext.BaseDirectory);
        while (folder is not null && !File.Exists(Path.Combine(folder.FullName, "HumWatch.sln")))
        {
            folder = folder.Parent;
        }

        return folder?.FullName ?? throw new InvalidOperationException("HumWatch.sln not found above the test folder.");
    }

    private static BoundSettings Bind(Dictionary<string, string?> settings) => SettingsBuilder.Build(SettingsSources.Isolated(settings));

    private static List<string> Errors(Dictionary<string, string?> settings) =>
        [.. Assert.Throws<ConfigurationException>(() => Bind(settings)).Message.Split(Environment.NewLine)];
}
