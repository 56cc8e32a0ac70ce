using HumWatch.TestSupport;
using System.Data.Common;
using System.Reflection;
using HumWatch.Host.Store;
using Microsoft.Data.Sqlite;
using Npgsql;
using Xunit.Sdk;

namespace HumWatch.Host.Tests.Store.Postgres;

/// <summary>
/// The PostgreSQL row of a store contract theory: "postgres", or — where no PostgreSQL can be had and
/// HUMWATCH_REQUIRE_POSTGRES is not 1 — a skipped row whose name says why (`dotnet test` prints the name, not the reason).
/// </summary>
[AttributeUsage(AttributeTargets.Method)]
public sealed class PostgresRowAttribute : DataAttribute
{
    public PostgresRowAttribute()
    {
        Skip = PostgresServer.SkipReason;
    }

    public override IEnumerable<object[]> GetData(MethodInfo testMethod) =>
        [[Skip is null ? StoreUnderTest.Postgres : $"{StoreUnderTest.Postgres} (skipped: {Skip})"]];
}

/// <summary>
/// One store of a contract test, on the provider its row names: a SQLite file in a temp folder, or a database of its
/// own on the <see cref="PostgresServer"/>. Opens any number of <see cref="HumWatchStore"/> objects on it (two
/// instances of one fleet are two objects) and runs raw SQL beside them on a connection of its own.
/// </summary>
internal sealed class StoreUnderTest : IDisposable
{
    public const string Sqlite = "sqlite";
    public const string Postgres = "postgres";

    private readonly TempFolder _temp = new();
    private readonly TimeProvider _time;

    public StoreUnderTest(string provider, PostgresServer server, TimeProvider time)
    {
        _time = time;
        IsPostgres = provider.StartsWith(Postgres, StringComparison.Ordinal);
        Options = IsPostgres
            ? new StoreOptions { Provider = StoreProvider.Postgres, ConnectionString = server.CreateDatabase() }
            : new StoreOptions { Path = _temp.File("store.db") };
    }

    public bool IsPostgres { get; }

    public StoreOptions Options { get; }

    public HumWatchStore Open(string? instance = null) => new(Options, _time, instance);

    /// <summary>Runs <paramref name="sql"/> on a connection of its own; returns the first column of the first row.</summary>
    public object? Raw(string sql)
    {
        using var connection = Connect();
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        return command.ExecuteScalar();
    }

    public void Dispose()
    {
        NpgsqlConnection.ClearAllPools();
        SqliteConnection.ClearAllPools();
        _temp.Dispose();
    }

    private DbConnection Connect()
    {
        DbConnection connection = IsPostgres
            ? new NpgsqlConnection(Options.ConnectionString)
            : new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = Options.Path, Pooling = false }.ToString());
        connection.Open();
        return connection;
    }
}
