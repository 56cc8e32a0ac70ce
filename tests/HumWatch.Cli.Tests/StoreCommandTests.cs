using HumWatch.Cli.Commands;
using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;
using HumWatch.Host.Store;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>`humwatch store copy`: what an operator sees and the exit codes (the copy itself: Host's StoreCopyTests).</summary>
public sealed class StoreCommandTests : IDisposable
{
    private static readonly DateTimeOffset Minute = new(2026, 3, 2, 9, 15, 0, TimeSpan.Zero);
    private readonly TempFolder _work = new();

    public void Dispose() => _work.Dispose();

    private string File(string name) => Path.Combine(_work.Path, name);

    private static void Fill(string path)
    {
        using var store = new HumWatchStore(new StoreOptions { Path = path }, TimeProvider.System, "cedar-host");
        store.Instances.Register("cedar-host", "1.0.0", Minute);
        store.Ledger.AddMinuteRows([
            new MinuteRow("cedar-room", "s1", 1, Minute, FindingKey.Mains(1), 60, 42, 3.5, 2.25, ["Cz"], 50.01),
            new MinuteRow("cedar-room", "s1", 2, Minute.AddMinutes(1), FindingKey.Mains(1), 60, 0, double.NaN, double.NaN, [], 49.99),
        ]);
        store.Instances.ClaimOnce("older-build-alerts", "cedar-host", Minute);
    }

    private static (int Code, string Output, string Error) Copy(string from, string to)
    {
        using var output = new StringWriter();
        using var error = new StringWriter();
        var code = StoreCommand.Copy(from, to, output, error);
        return (code, output.ToString(), error.ToString());
    }

    [Fact]
    public void A_copy_into_an_empty_file_lists_every_table_equal_and_exits_0()
    {
        Fill(File("box.db"));

        var (code, output, error) = Copy($"sqlite:{File("box.db")}", $"sqlite:{File("copy.db")}");

        Assert.True(code == 0, error);
        Assert.Contains($"All {StoreCopy.Tables.Length} tables equal (6 rows).", output, StringComparison.Ordinal);
        foreach (var table in StoreCopy.Tables)
        {
            Assert.Matches($@"\n  {table} +rows +\d+ → +\d+  checksum [0-9a-f]{{16}}… = [0-9a-f]{{16}}…  equal", output);
        }

        using var copy = new HumWatchStore(new StoreOptions { Path = File("copy.db") }, TimeProvider.System);
        Assert.Equal(2, copy.Ledger.Rows("cedar-room", Minute, Minute.AddHours(1)).Count);
    }

    [Fact]
    public void A_target_with_rows_is_refused_with_exit_2_naming_the_table()
    {
        Fill(File("box.db"));
        Fill(File("busy.db"));

        var (code, _, error) = Copy($"sqlite:{File("box.db")}", $"sqlite:{File("busy.db")}");

        Assert.Equal(2, code);
        Assert.Contains("already holds 2 row(s) in minute_ledger", error, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("box.db", "sqlite:copy.db", "--from must be sqlite:PATH, postgres:CONNECTION-STRING or postgres-file:PATH (got \"box.db\")")]
    [InlineData("sqlite:box.db", "mysql:copy", "--to must be sqlite:PATH, postgres:CONNECTION-STRING or postgres-file:PATH (got \"mysql:copy\")")]
    [InlineData("postgres:Host=db", "sqlite:copy.db", "--from must be sqlite:PATH, the store of one box")]
    [InlineData("sqlite:missing.db", "sqlite:copy.db", "missing.db does not exist")]
    [InlineData("sqlite:box.db", "sqlite:box.db", "--from and --to name the same file")]
    public void Bad_addresses_exit_2_with_a_message_naming_the_option(string from, string to, string expected)
    {
        Fill(File("box.db"));
        var resolved = (Func<string, string>)(a => a.StartsWith("sqlite:", StringComparison.Ordinal) ? "sqlite:" + File(a["sqlite:".Length..]) : a);

        var (code, _, error) = Copy(resolved(from), resolved(to));

        Assert.Equal(2, code);
        Assert.Contains(expected, error, StringComparison.Ordinal);
        Assert.StartsWith("humwatch store copy: ", error, StringComparison.Ordinal);
    }

    [Fact]
    public void A_database_that_cannot_be_reached_is_named_without_its_password()
    {
        Fill(File("box.db"));

        // Port 1 on loopback: nothing listens there, so the connection is refused at once (common practice, no source).
        var (code, _, error) = Copy($"sqlite:{File("box.db")}", "postgres:Host=127.0.0.1;Port=1;Database=humwatch;Username=cedar;Password=not-for-logs;Timeout=3");

        Assert.Equal(2, code);
        Assert.Contains("127.0.0.1:1/humwatch as cedar", error, StringComparison.Ordinal);
        Assert.DoesNotContain("not-for-logs", error, StringComparison.Ordinal);
    }

    [Fact]
    public void A_connection_string_file_that_is_missing_is_named()
    {
        Fill(File("box.db"));

        var (code, _, error) = Copy($"sqlite:{File("box.db")}", $"postgres-file:{File("none.conn")}");

        Assert.Equal(2, code);
        Assert.Contains("none.conn", error, StringComparison.Ordinal);
    }
}
