using HumWatch.Host.Store;
using Microsoft.Data.Sqlite;

namespace HumWatch.Host.Tests.Store;

/// <summary>Store files as an earlier build left them: the schema up to a given version, plus raw rows in that schema's columns.</summary>
internal static class OlderStoreFile
{
    /// <summary>Creates <paramref name="path"/> with migrations 1 … <paramref name="version"/> applied and recorded, as a build of that version does.</summary>
    public static void Create(string path, int version)
    {
        using var connection = Open(path);
        using var transaction = connection.BeginTransaction();
        Execute(connection, transaction, "CREATE TABLE schema_version (version INTEGER NOT NULL PRIMARY KEY, applied_utc_ms INTEGER NOT NULL)");
        for (var v = 1; v <= version; v++)
        {
            foreach (var statement in StoreSchema.Migrations[v - 1])
            {
                Execute(connection, transaction, statement);
            }

            Execute(connection, transaction, $"INSERT INTO schema_version (version, applied_utc_ms) VALUES ({v}, 0)");
        }

        transaction.Commit();
    }

    /// <summary>Runs statements on the file outside any store (the store must be closed or share it through WAL).</summary>
    public static object? Raw(string path, string sql)
    {
        using var connection = Open(path);
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        return command.ExecuteScalar();
    }

    private static SqliteConnection Open(string path)
    {
        var connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = path, Pooling = false }.ToString());
        connection.Open();
        return connection;
    }

    private static void Execute(SqliteConnection connection, SqliteTransaction transaction, string sql)
    {
        using var command = connection.CreateCommand();
        command.Transaction = transaction;
        command.CommandText = sql;
        command.ExecuteNonQuery();
    }
}
