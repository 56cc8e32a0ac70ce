using HumWatch.Host.Configuration;
using HumWatch.Host.Store;
using Xunit;

namespace HumWatch.Host.Tests.Store.Postgres;

/// <summary>
/// Store:Provider, Store:ConnectionString and Store:ConnectionStringFile: validation names the key and never the
/// credentials; PostgreSQL's errors sort into the store's fault kinds.
/// </summary>
public sealed class StoreProviderSettingsTests : IDisposable
{
    private const string Password = "pw-7Hq2-not-for-logs";
    private readonly TempFolder _temp = new();

    public void Dispose() => _temp.Dispose();

    [Fact]
    public void Postgres_needs_exactly_one_of_the_connection_string_and_its_file()
    {
        var neither = Assert.Single(new StoreOptions { Provider = StoreProvider.Postgres }.Validate());
        Assert.StartsWith("Store:Provider Postgres needs Store:ConnectionString or Store:ConnectionStringFile", neither, StringComparison.Ordinal);

        var file = _temp.WriteText("pg.conn", $"Host=db.example;Username=hw;Password={Password}\n");
        var both = Assert.Single(new StoreOptions { Provider = StoreProvider.Postgres, ConnectionString = "Host=db.example", ConnectionStringFile = file }.Validate());
        Assert.StartsWith("Store:ConnectionString and Store:ConnectionStringFile are both set", both, StringComparison.Ordinal);

        Assert.Empty(new StoreOptions { Provider = StoreProvider.Postgres, ConnectionStringFile = file }.Validate());
        Assert.Empty(new StoreOptions { Provider = StoreProvider.Postgres, ConnectionString = "Host=db.example" }.Validate());
        Assert.Empty(new StoreOptions { Path = " ", Provider = StoreProvider.Postgres, ConnectionString = "Host=db.example" }.Validate()); // Store:Path is SQLite's
    }

    [Fact]
    public void The_connection_string_file_must_exist_and_its_content_is_the_string()
    {
        var missing = _temp.File("nowhere.conn");
        var error = Assert.Single(new StoreOptions { Provider = StoreProvider.Postgres, ConnectionStringFile = missing }.Validate());
        Assert.Equal($"Store:ConnectionStringFile {missing} does not exist.", error);

        var empty = _temp.WriteText("empty.conn", "  \n");
        Assert.Contains("is empty", Assert.Single(new StoreOptions { Provider = StoreProvider.Postgres, ConnectionStringFile = empty }.Validate()), StringComparison.Ordinal);

        var file = _temp.WriteText("pg.conn", $"Host=db.example;Port=6543;Database=fleet;Username=hw;Password={Password}\n");
        var options = new StoreOptions { Provider = StoreProvider.Postgres, ConnectionStringFile = file };
        Assert.Equal($"Host=db.example;Port=6543;Database=fleet;Username=hw;Password={Password}", options.ResolveConnectionString());
        Assert.Equal("postgres db.example:6543/fleet as hw", options.Describe());
    }

    [Fact]
    public void A_bad_connection_string_is_named_by_its_key_without_quoting_it()
    {
        var error = Assert.Single(new StoreOptions { Provider = StoreProvider.Postgres, ConnectionString = $"Hots=db;Password={Password}" }.Validate());
        Assert.StartsWith("Store:ConnectionString is not a valid PostgreSQL connection string", error, StringComparison.Ordinal);
        Assert.DoesNotContain(Password, error, StringComparison.Ordinal);
    }

    [Fact]
    public void A_server_that_cannot_be_reached_is_named_by_host_port_database_and_user_never_the_password()
    {
        // Port 1 on loopback: nothing listens there, the connection is refused at once.
        var options = new StoreOptions { Provider = StoreProvider.Postgres, ConnectionString = $"Host=127.0.0.1;Port=1;Database=fleet;Username=hw;Password={Password};Timeout=5" };
        var ex = Assert.Throws<InvalidOperationException>(() => new HumWatchStore(options, TimeProvider.System, "lab-a"));
        Assert.StartsWith("Store postgres 127.0.0.1:1/fleet as hw: cannot open the database", ex.Message, StringComparison.Ordinal);
        Assert.DoesNotContain(Password, ex.ToString(), StringComparison.Ordinal);
    }

    [Fact]
    public void Settings_bind_the_provider_keys_and_list_their_problems_with_the_others()
    {
        var file = _temp.WriteText("pg.conn", $"Host=db.example;Username=hw;Password={Password}");
        var bound = SettingsBuilder.Build(SettingsSources.Isolated(new Dictionary<string, string?> { ["Store:Provider"] = "Postgres", ["Store:ConnectionStringFile"] = file }));
        Assert.Equal((StoreProvider.Postgres, file), (bound.Store.Provider, bound.Store.ConnectionStringFile));

        var ex = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(SettingsSources.Isolated(new Dictionary<string, string?> { ["Store:Provider"] = "Postgres" })));
        Assert.Contains("Store:Provider Postgres needs Store:ConnectionString or Store:ConnectionStringFile", ex.Message, StringComparison.Ordinal);
        var wrong = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(SettingsSources.Isolated(new Dictionary<string, string?> { ["Store:Provider"] = "Punchcards" })));
        Assert.Contains("Store:Provider must be one of Sqlite, Postgres (got \"Punchcards\")", wrong.Message, StringComparison.Ordinal);
    }

    [Theory]
    // SQLSTATEs: PostgreSQL documentation, Appendix A "PostgreSQL Error Codes".
    [InlineData("53100", "full")] // disk_full
    [InlineData("25006", "read-only")] // read_only_sql_transaction
    [InlineData("42501", "read-only")] // insufficient_privilege
    [InlineData("55P03", "locked")] // lock_not_available
    [InlineData("40P01", "locked")] // deadlock_detected
    [InlineData("XX001", "failing")] // data_corrupted
    public void PostgreSQL_errors_are_sorted_by_their_SQLSTATE(string sqlState, string kind)
    {
        var error = new Npgsql.PostgresException("refused", "ERROR", "ERROR", sqlState);
        Assert.Equal(kind, StoreFaults.Classify(new InvalidOperationException("wrapped", error)).ToText());
        Assert.True(StoreFaults.IsStoreFailure(error));
    }
}
