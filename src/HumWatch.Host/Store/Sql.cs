using System.Data;
using System.Data.Common;
using System.Globalization;
using System.Text.Json;

namespace HumWatch.Host.Store;

/// <summary>
/// Small helpers the table classes share for commands, parameters and column values, over System.Data.Common so one
/// set of tables serves every provider. Parameters are written <c>@name</c>, which SQLite and Npgsql both read.
/// </summary>
internal static class Sql
{
    /// <summary>A command on <paramref name="connection"/> with <paramref name="text"/>, in <paramref name="transaction"/> when given.</summary>
    public static DbCommand Command(DbConnection connection, string text, DbTransaction? transaction = null)
    {
        var command = connection.CreateCommand();
        command.CommandText = text;
        command.Transaction = transaction;
        return command;
    }

    public static void Execute(DbConnection connection, string text, DbTransaction? transaction = null)
    {
        using var command = Command(connection, text, transaction);
        command.ExecuteNonQuery();
    }

    public static object? Scalar(DbConnection connection, string text, DbTransaction? transaction = null)
    {
        using var command = Command(connection, text, transaction);
        return command.ExecuteScalar();
    }

    // Every parameter carries its type, null or not: PostgreSQL cannot infer the type of an untyped NULL in
    // "@p IS NULL OR column = @p", and SQLite does not mind.

    public static void Add(DbCommand command, string name, string? value) => Add(command, name, DbType.String, value);

    public static void Add(DbCommand command, string name, long? value) => Add(command, name, DbType.Int64, value);

    public static void Add(DbCommand command, string name, int? value) => Add(command, name, DbType.Int32, value);

    public static void Add(DbCommand command, string name, double? value) => Add(command, name, DbType.Double, value);

    public static void Add(DbCommand command, string name, byte[] value) => Add(command, name, DbType.Binary, value);

    /// <summary>Binds @stream, @from and @to of a query over one stream and a range of Unix seconds [from, to).</summary>
    /// <exception cref="ArgumentException">The stream id is empty.</exception>
    public static void AddStreamRange(DbCommand command, string stream, long fromSeconds, long toSeconds)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(stream);
        Add(command, "@stream", stream);
        Add(command, "@from", fromSeconds);
        Add(command, "@to", toSeconds);
    }

    /// <summary>Runs a query and maps each row; the list is in the query's order.</summary>
    public static List<T> ReadAll<T>(DbCommand command, Func<DbDataReader, T> map)
    {
        using var reader = command.ExecuteReader();
        var result = new List<T>();
        while (reader.Read())
        {
            result.Add(map(reader));
        }

        return result;
    }

    /// <summary>
    /// An integer column, whatever width the provider reports (SQLite: 64-bit; PostgreSQL: INTEGER 32-bit, BIGINT
    /// 64-bit, count(*) BIGINT, a comparison BOOLEAN).
    /// </summary>
    public static long Int64(DbDataReader reader, int ordinal) => reader.GetFieldType(ordinal) == typeof(long)
        ? reader.GetInt64(ordinal)
        : Convert.ToInt64(reader.GetValue(ordinal), CultureInfo.InvariantCulture);

    /// <summary>An integer column read as int (counts, harmonics, attempts).</summary>
    public static int Int32(DbDataReader reader, int ordinal) => checked((int)Int64(reader, ordinal));

    public static long? NullableInt64(DbDataReader reader, int ordinal) => reader.IsDBNull(ordinal) ? null : Int64(reader, ordinal);

    /// <summary>A scalar result as a long (either provider's integer or boolean); null for no row or NULL.</summary>
    public static long? Int64(object? scalar) => scalar is null or DBNull ? null : Convert.ToInt64(scalar, CultureInfo.InvariantCulture);

    /// <summary>Non-finite values (NaN stands for "none" in the pipeline) are stored as NULL.</summary>
    public static double? Finite(double value) => double.IsFinite(value) ? value : null;

    public static double? NullableDouble(DbDataReader reader, int ordinal) => reader.IsDBNull(ordinal) ? null : reader.GetDouble(ordinal);

    public static string? NullableString(DbDataReader reader, int ordinal) => reader.IsDBNull(ordinal) ? null : reader.GetString(ordinal);

    /// <summary>A channel list as its JSON column text.</summary>
    public static string LabelsJson(IReadOnlyList<string> labels) => JsonSerializer.Serialize([.. labels], StoreJsonContext.Output.StringArray);

    /// <summary>A channel list column read back.</summary>
    public static string[] Labels(string json) => JsonSerializer.Deserialize(json, StoreJsonContext.Default.StringArray) ?? [];

    /// <summary>
    /// True (as SQL) when the holder named by <paramref name="column"/> may be replaced by the instance @me: no holder
    /// (rows of older builds and tools), @me itself (a restart), or an instance the instances table marks stopped. A
    /// holder that is alive, or died and is not swept yet, keeps what it holds.
    /// </summary>
    public static string HolderReplaceable(string column) =>
        $"({column} IS NULL OR {column} = @me OR EXISTS (SELECT 1 FROM instances WHERE instances.name = {column} AND instances.stopped_utc_ms IS NOT NULL))";

    private static void Add(DbCommand command, string name, DbType type, object? value)
    {
        var parameter = command.CreateParameter();
        parameter.ParameterName = name;
        parameter.DbType = type;
        parameter.Value = value ?? DBNull.Value;
        command.Parameters.Add(parameter);
    }
}
