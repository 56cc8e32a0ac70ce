using System.Net;
using System.Net.Sockets;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>
/// `run` and `demo` failing to start for reasons a person can fix: one message naming the endpoint or folder and the
/// setting that changes it, exit code 2, and no stack trace. Ports are ephemeral loopback ones taken by the test.
/// </summary>
public sealed class ServiceStartTests
{
    [Fact]
    public async Task A_taken_publish_port_names_the_endpoint_the_setting_and_another_HumWatch()
    {
        using var work = new TempFolder();
        using var squatter = TakePort(out var port);

        var (code, output, error) = await CliRunner.RunInAsync(work.Path, NoEnvironment, "run", "--data", "data", "--set", $"Publish:Endpoint=tcp://127.0.0.1:{port}", "--set", "Web:Endpoint=http://127.0.0.1:0", "--set", "Ingest:Endpoints:0:Address=tcp://127.0.0.1:*");

        Assert.Equal(2, code);
        Assert.Contains($"humwatch run: cannot start: tcp://127.0.0.1:{port} is already in use (Publish:Endpoint). Another HumWatch", error, StringComparison.Ordinal);
        Assert.Contains("--set Publish:Endpoint=", error, StringComparison.Ordinal);
        AssertNoStackTrace(output, error);
    }

    [Fact]
    public async Task Serving_the_page_beyond_this_machine_without_a_token_is_refused_at_start_naming_the_setting()
    {
        using var work = new TempFolder();

        var (code, output, error) = await CliRunner.RunInAsync(work.Path, NoEnvironment, "run", "--data", "data", "--set", "Web:Endpoint=http://0.0.0.0:0", "--set", "Web:AllowNonLoopback=true", "--set", "Publish:Endpoint=tcp://127.0.0.1:*", "--set", "Ingest:Endpoints:0:Address=tcp://127.0.0.1:*");

        Assert.Equal(2, code);
        Assert.Contains("Web:Endpoint http://0.0.0.0:0 is reachable from other hosts but no credential is set", error, StringComparison.Ordinal);
        Assert.Contains("Set Web:AccessToken (at least 16 characters)", error, StringComparison.Ordinal);
        AssertNoStackTrace(output, error);
    }

    [Fact]
    public async Task A_taken_web_port_names_the_web_endpoint_setting()
    {
        using var work = new TempFolder();
        using var squatter = TakePort(out var port);

        var (code, output, error) = await CliRunner.RunInAsync(work.Path, NoEnvironment, "run", "--data", "data", "--set", $"Web:Endpoint=http://127.0.0.1:{port}", "--set", "Publish:Endpoint=tcp://127.0.0.1:*", "--set", "Ingest:Endpoints:0:Address=tcp://127.0.0.1:*");

        Assert.Equal(2, code);
        Assert.Contains($"humwatch run: cannot start: http://127.0.0.1:{port} is already in use (Web:Endpoint). Another HumWatch", error, StringComparison.Ordinal);
        AssertNoStackTrace(output, error);
    }

    [Fact]
    public async Task A_taken_ingest_port_names_the_ingest_endpoint_setting()
    {
        using var work = new TempFolder();
        using var squatter = TakePort(out var port);

        var (code, output, error) = await CliRunner.RunInAsync(work.Path, NoEnvironment, "run", "--data", "data", "--set", "Publish:Endpoint=tcp://127.0.0.1:*", "--set", "Web:Endpoint=http://127.0.0.1:0", "--set", $"Ingest:Endpoints:0:Address=tcp://127.0.0.1:{port}");

        Assert.Equal(2, code);
        Assert.Contains($"tcp://127.0.0.1:{port} is already in use (Ingest:Endpoints:0:Address)", error, StringComparison.Ordinal);
        AssertNoStackTrace(output, error);
    }

    [Fact]
    public async Task A_second_demo_on_a_taken_port_says_so_in_one_line()
    {
        using var work = new TempFolder();
        using var squatter = TakePort(out var port);
        var scenarios = Path.Combine(AppContext.BaseDirectory, "demo-streams");

        var (code, output, error) = await CliRunner.RunInAsync(work.Path, NoEnvironment, "demo", "--scenarios", scenarios, "--data", "data", "--seconds", "5", "--set", $"Publish:Endpoint=tcp://127.0.0.1:{port}", "--set", "Web:Endpoint=http://127.0.0.1:0");

        Assert.Equal(2, code);
        Assert.Contains($"humwatch demo: cannot start: tcp://127.0.0.1:{port} is already in use (Publish:Endpoint)", error, StringComparison.Ordinal);
        AssertNoStackTrace(output, error);
    }

    [Fact]
    public async Task A_data_folder_that_cannot_be_made_names_the_setting_and_the_folder()
    {
        using var work = new TempFolder();
        await File.WriteAllTextAsync(Path.Combine(work.Path, "a-file"), "not a folder");

        // A folder inside a regular file cannot be created, whoever runs the test.
        var (code, output, error) = await CliRunner.RunInAsync(work.Path, NoEnvironment, "run", "--data", "a-file/data");

        Assert.Equal(2, code);
        Assert.Contains("humwatch run: cannot start: Logs:Folder: cannot create or write to the folder ", error, StringComparison.Ordinal);
        Assert.Contains(Path.Combine(work.Path, "a-file", "data", "logs"), error, StringComparison.Ordinal);
        AssertNoStackTrace(output, error);
    }

    [Fact]
    public async Task A_store_that_is_not_a_database_names_the_file_and_the_setting()
    {
        using var work = new TempFolder();
        Directory.CreateDirectory(Path.Combine(work.Path, "data"));
        var store = Path.Combine(work.Path, "data", "humwatch.db");
        await File.WriteAllBytesAsync(store, [.. Enumerable.Range(0, 4096).Select(i => (byte)(i * 37))]);

        var (code, output, error) = await CliRunner.RunInAsync(work.Path, NoEnvironment, "run", "--data", "data", "--set", "Publish:Endpoint=tcp://127.0.0.1:*", "--set", "Web:Endpoint=http://127.0.0.1:0", "--set", "Ingest:Endpoints:0:Address=tcp://127.0.0.1:*");

        Assert.Equal(2, code);
        Assert.Contains($"humwatch run: cannot start: Store {store}: cannot open the database", error, StringComparison.Ordinal);
        Assert.Contains("Store:Path", error, StringComparison.Ordinal);
        AssertNoStackTrace(output, error);
    }

    [Fact]
    public async Task Run_data_puts_the_store_logs_inbox_archive_rejected_and_summaries_under_the_folder_and_set_still_wins()
    {
        using var work = new TempFolder();
        using var squatter = TakePort(out var port);

        // The start stops at the ingest socket, after every folder is made and the store is opened: what --data moved is on disk.
        var (code, _, error) = await CliRunner.RunInAsync(work.Path, NoEnvironment, "run", "--data", "lab", "--set", "Inbox:RejectedFolder=elsewhere/refused", "--set", "Publish:Endpoint=tcp://127.0.0.1:*", "--set", "Web:Endpoint=http://127.0.0.1:0", "--set", $"Ingest:Endpoints:0:Address=tcp://127.0.0.1:{port}");

        Assert.True(code == 2, error);
        var lab = Path.Combine(work.Path, "lab");
        Assert.True(File.Exists(Path.Combine(lab, "humwatch.db")), "store under --data");
        foreach (var folder in new[] { "logs", "inbox", "archive", "summaries" })
        {
            Assert.True(Directory.Exists(Path.Combine(lab, folder)), $"{folder} under --data");
        }

        Assert.NotEmpty(Directory.GetFiles(Path.Combine(lab, "logs")));
        Assert.False(Directory.Exists(Path.Combine(lab, "rejected")), "--set Inbox:RejectedFolder beats --data");
        Assert.True(Directory.Exists(Path.Combine(work.Path, "elsewhere", "refused")));
        Assert.False(Directory.Exists(Path.Combine(work.Path, "humwatch-data")), "nothing in the default data folder");
    }

    private static readonly Dictionary<string, string> NoEnvironment = [];

    /// <summary>Holds an ephemeral loopback port, listening, as another program would.</summary>
    private static TcpListener TakePort(out int port)
    {
        var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        port = ((IPEndPoint)listener.LocalEndpoint).Port;
        return listener;
    }

    private static void AssertNoStackTrace(string output, string error)
    {
        var all = output + error;
        Assert.DoesNotContain("   at ", all, StringComparison.Ordinal);
        Assert.DoesNotContain("Exception", all, StringComparison.Ordinal);
    }
}
