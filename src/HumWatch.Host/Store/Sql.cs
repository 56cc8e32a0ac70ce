using System.Text.Json;
using Microsoft.Data.Sqlite;

namespace HumWatch.Host.Store;

/// <summary>Small helpers the table classes share for commands, parameters and column values.</summary>
internal static class Sql
{
    /// <summary>A command on <paramref name="connection"/> with <paramref name="text"/>, in <paramref name="transaction"/> when given.</summary>
    public static SqliteCommand Command(SqliteConnection connection, string text, SqliteTransaction? transaction = null)
    {
        var command = connection.CreateCommand();
        command.CommandText = text;
        command.Transaction = transaction;
        return command;
    }

    public static void Execute(SqliteConnection connection, string text)
    {
        using var command = Command(connection, text);
        command.ExecuteNonQuery();
    }

    public static object? Scalar(SqliteConnection connection, string text)
    {
        using var command = Command(connection, text);
        return command.ExecuteScalar();
    }

    /// <summary>Adds a parameter; null becomes SQL NULL.</summary>
    public static void Add(SqliteCommand command, string name, object? value) =>
        command.Parameters.AddWithValue(name, value ?? DBNull.Value);

    /// <summary>Binds $stream, $from and $to of a query over one stream and a range of Unix seconds [from, to).</summary>
    /// <exception cref="ArgumentException">The stream id is empty.</exception>
    public static void AddStreamRange(SqliteCommand command, string stream, long fromSeconds, long toSeconds)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(stream);
        Add(command, "$stream", stream);
        Add(command, "$from", fromSeconds);
        Add(command, "$to", toSeconds);
    }

    /// <summary>Runs a query and maps each row; the list is in the query's order.</summary>
    public static List<T> ReadAll<T>(SqliteCommand command, Func<SqliteDataReader, T> map)
    {
        using var reader = command.ExecuteReader();
        var result = new List<T>();
        while (reader.Read())
        {
            result.Add(map(reader));
        }

        return result;
    }

    /// <summary>Non-finite values (NaN stands for "none" in the pipeline) are stored as NULL.</summary>
    public static double? Finite(double value) => double.IsFinite(value) ? value : null;

    public static double? NullableDouble(SqliteDataReader reader, int ordinal) => reader.IsDBNull(ordinal) ? null : reader.GetDouble(ordinal);

    public static string? NullableString(SqliteDataReader reader, int ordinal) => reader.IsDBNull(ordinal) ? null : reader.GetString(ordinal);

    /// <summary>A channel list as its JSON column text.</summary>
    public static string LabelsJson(IReadOnlyList<string> labels) => JsonSerializer.Serialize([.. labels], StoreJsonContext.Output.StringArray);

    /// <summary>A channel list column read back.</summary>
    public static string[] Labels(string json) => JsonSerializer.Deserialize(json, StoreJsonContext.Default.StringArray) ?? [];
}
