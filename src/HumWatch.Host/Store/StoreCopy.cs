using System.Buffers.Binary;
using System.Data.Common;
using System.Globalization;
using System.Security.Cryptography;
using System.Text;

namespace HumWatch.Host.Store;

/// <summary>One table's outcome of a <see cref="StoreCopy"/>: rows and checksum read back from each side.</summary>
/// <param name="Table">Table name.</param>
/// <param name="SourceRows">Rows in the source table.</param>
/// <param name="TargetRows">Rows in the target table after the copy, read back.</param>
/// <param name="SourceChecksum">Checksum of the source table's rows (<see cref="StoreCopy.Checksum"/>).</param>
/// <param name="TargetChecksum">Checksum of the target table's rows, read back after the copy.</param>
public sealed record TableCopyResult(string Table, long SourceRows, long TargetRows, string SourceChecksum, string TargetChecksum)
{
    /// <summary>Whether the target holds exactly the source's rows.</summary>
    public bool Matches => SourceRows == TargetRows && SourceChecksum == TargetChecksum;
}

/// <summary>
/// Copies every table of one store into another, empty one of the same schema version (SQLite into PostgreSQL, or into
/// another SQLite file), in one transaction on the target, then proves the copy by reading both sides back: row counts
/// and a checksum per table.
/// </summary>
/// <remarks>
/// The checksum is order-independent: the SHA-256 of each row's canonical encoding, summed as four 64-bit lanes modulo
/// 2^64. The two engines sort text differently (SQLite by bytes, PostgreSQL by the database's collation), so a chained
/// hash over "ORDER BY key" would differ for equal tables; a sum over rows does not, and primary keys make every row
/// distinct, so equal multisets mean equal tables. Integers of any width encode alike (one engine's INTEGER is 64-bit,
/// the other's 32-bit), floating-point numbers by their 64-bit pattern (a float4 column would show as a mismatch).
/// </remarks>
internal static class StoreCopy
{
    /// <summary>Rows per INSERT statement at most; kept well under both engines' parameter limits (32766 and 65535).</summary>
    private const int MaxParametersPerStatement = 2000;

    /// <summary>
    /// The tables copied, in <see cref="StoreSchema.Tables"/> order. schema_version is not copied: each side keeps its
    /// own migration record, and the versions must be equal.
    /// </summary>
    internal static readonly string[] Tables = [.. StoreSchema.Tables.Select(t => t.Table).Where(t => t != "schema_version")];

    /// <summary>Identity-numbered tables: after rows are copied with their ids, the target's next id must follow them.</summary>
    internal static readonly string[] IdentityTables = ["alerts", "file_journal"];

    /// <summary>
    /// Copies all tables from <paramref name="source"/> into <paramref name="target"/> and reads both back.
    /// </summary>
    /// <param name="source">An open connection to a migrated store.</param>
    /// <param name="target">An open connection to a migrated, empty store of the same schema version.</param>
    /// <param name="afterIdentityTable">Run on the target inside the copy's transaction after each of <see cref="IdentityTables"/>
    /// (<see cref="StoreConnection.AfterRowsCopiedWithIds"/> of the target store).</param>
    /// <param name="progress">Told of each table as it is copied, with its row count.</param>
    /// <exception cref="InvalidOperationException">The versions differ, or the target already holds rows, or a table's columns differ.</exception>
    public static IReadOnlyList<TableCopyResult> Copy(
        DbConnection source,
        DbConnection target,
        Action<DbConnection, DbTransaction, string>? afterIdentityTable = null,
        Action<string, long>? progress = null)
    {
        ArgumentNullException.ThrowIfNull(source);
        ArgumentNullException.ThrowIfNull(target);
        var sourceVersion = StoreSchema.CurrentVersion(source);
        var targetVersion = StoreSchema.CurrentVersion(target);
        if (sourceVersion != targetVersion)
        {
            throw new InvalidOperationException(
                $"the source store has schema version {sourceVersion} and the target {targetVersion}; open both with this build first so they are migrated to the same version.");
        }

        foreach (var table in Tables)
        {
            var rows = CountRows(target, table);
            if (rows > 0)
            {
                throw new InvalidOperationException($"the target store already holds {rows} row(s) in {table}; copy only into an empty store.");
            }
        }

        // One snapshot of the source (a reader in a transaction sees one state even if something still writes).
        using (var read = source.BeginTransaction())
        using (var write = target.BeginTransaction())
        {
            foreach (var table in Tables)
            {
                var copied = CopyTable(source, read, target, write, table);
                if (afterIdentityTable is not null && IdentityTables.Contains(table))
                {
                    afterIdentityTable(target, write, table);
                }

                progress?.Invoke(table, copied);
            }

            write.Commit();
            read.Commit();
        }

        var results = new List<TableCopyResult>(Tables.Length);
        foreach (var table in Tables)
        {
            var (sourceRows, sourceSum) = Checksum(source, table);
            var (targetRows, targetSum) = Checksum(target, table);
            results.Add(new TableCopyResult(table, sourceRows, targetRows, sourceSum, targetSum));
        }

        return results;
    }

    /// <summary>Rows of a table and its order-independent checksum (64 hex digits); see the remarks of <see cref="StoreCopy"/>.</summary>
    public static (long Rows, string Checksum) Checksum(DbConnection connection, string table)
    {
        ArgumentNullException.ThrowIfNull(connection);
        var columns = Columns(connection, table, null);
        Array.Sort(columns, StringComparer.Ordinal);
        using var command = Sql.Command(connection, $"SELECT {string.Join(", ", columns)} FROM {table}");
        using var reader = command.ExecuteReader();
        Span<ulong> lanes = stackalloc ulong[4];
        Span<byte> digest = stackalloc byte[SHA256.HashSizeInBytes];
        var encoded = new StringBuilder();
        long rows = 0;
        while (reader.Read())
        {
            encoded.Clear();
            for (var i = 0; i < columns.Length; i++)
            {
                Encode(encoded, columns[i], reader.GetValue(i));
            }

            SHA256.HashData(Encoding.UTF8.GetBytes(encoded.ToString()), digest);
            for (var lane = 0; lane < 4; lane++)
            {
                lanes[lane] = unchecked(lanes[lane] + BinaryPrimitives.ReadUInt64BigEndian(digest[(lane * 8)..]));
            }

            rows++;
        }

        return (rows, string.Create(CultureInfo.InvariantCulture, $"{lanes[0]:x16}{lanes[1]:x16}{lanes[2]:x16}{lanes[3]:x16}"));
    }

    private static long CopyTable(DbConnection source, DbTransaction read, DbConnection target, DbTransaction write, string table)
    {
        var columns = Columns(source, table, read);
        var targetColumns = Columns(target, table, write);
        var missing = columns.Except(targetColumns, StringComparer.Ordinal).Concat(targetColumns.Except(columns, StringComparer.Ordinal)).ToArray();
        if (missing.Length > 0)
        {
            throw new InvalidOperationException($"table {table} has different columns in the two stores ({string.Join(", ", missing)}); both must be of the same schema version.");
        }

        var rowsPerStatement = Math.Max(1, MaxParametersPerStatement / columns.Length);
        var buffer = new List<object[]>(rowsPerStatement);
        using var select = Sql.Command(source, $"SELECT {string.Join(", ", columns)} FROM {table}", read);
        using var reader = select.ExecuteReader();
        long copied = 0;
        while (reader.Read())
        {
            var row = new object[columns.Length];
            reader.GetValues(row);
            buffer.Add(row);
            if (buffer.Count == rowsPerStatement)
            {
                copied += Insert(target, write, table, columns, buffer);
                buffer.Clear();
            }
        }

        if (buffer.Count > 0)
        {
            copied += Insert(target, write, table, columns, buffer);
        }

        return copied;
    }

    private static int Insert(DbConnection target, DbTransaction write, string table, string[] columns, List<object[]> rows)
    {
        using var insert = Sql.Command(target, string.Empty, write);
        var text = new StringBuilder($"INSERT INTO {table} ({string.Join(", ", columns)}) VALUES ");
        for (var r = 0; r < rows.Count; r++)
        {
            text.Append(r == 0 ? "(" : ", (");
            for (var c = 0; c < columns.Length; c++)
            {
                var name = string.Create(CultureInfo.InvariantCulture, $"@p{r}_{c}");
                text.Append(c == 0 ? name : ", " + name);
                var parameter = insert.CreateParameter();
                parameter.ParameterName = name;
                parameter.Value = rows[r][c];
                insert.Parameters.Add(parameter);
            }

            text.Append(')');
        }

        insert.CommandText = text.ToString();
        return insert.ExecuteNonQuery();
    }

    private static string[] Columns(DbConnection connection, string table, DbTransaction? transaction)
    {
        using var command = Sql.Command(connection, $"SELECT * FROM {table} WHERE 1 = 0", transaction);
        using var reader = command.ExecuteReader();
        var columns = new string[reader.FieldCount];
        for (var i = 0; i < columns.Length; i++)
        {
            columns[i] = reader.GetName(i).ToLowerInvariant();
        }

        return columns;
    }

    private static long CountRows(DbConnection connection, string table) =>
        Sql.Int64(Sql.Scalar(connection, $"SELECT count(*) FROM {table}")) ?? 0;

    private static void Encode(StringBuilder encoded, string column, object value)
    {
        encoded.Append(column).Append('=');
        switch (value)
        {
            case DBNull:
                encoded.Append('n');
                break;
            case long or int or short or byte or bool:
                encoded.Append('i').Append(Convert.ToInt64(value, CultureInfo.InvariantCulture).ToString(CultureInfo.InvariantCulture));
                break;
            case double d:
                encoded.Append('d').Append(BitConverter.DoubleToInt64Bits(d).ToString("x16", CultureInfo.InvariantCulture));
                break;
            case float f:
                // A float4 column cannot hold what the source's float8 held; encode it apart so the sums differ.
                encoded.Append('f').Append(BitConverter.SingleToInt32Bits(f).ToString("x8", CultureInfo.InvariantCulture));
                break;
            case string s:
                encoded.Append('s').Append(s.Length.ToString(CultureInfo.InvariantCulture)).Append(':').Append(s);
                break;
            case byte[] bytes:
                encoded.Append('b').Append(Convert.ToHexString(bytes));
                break;
            default:
                encoded.Append('?').Append(value.GetType().Name).Append(':').Append(Convert.ToString(value, CultureInfo.InvariantCulture));
                break;
        }

        encoded.Append('\u001f');
    }
}

/// <summary>`humwatch store copy`: opens both stores (migrating each to this build's schema) and runs <see cref="StoreCopy"/>.</summary>
public static class StoreCopyJob
{
    /// <summary>Copies <paramref name="from"/> into <paramref name="to"/> and reads both back.</summary>
    /// <param name="from">The store to copy.</param>
    /// <param name="to">The empty store to fill.</param>
    /// <param name="opened">Told the schema version both stores were opened at, before the copy starts.</param>
    /// <param name="progress">Told of each table as it is copied, with its row count.</param>
    /// <exception cref="InvalidOperationException">A store cannot be opened, the versions differ, or the target is not empty.</exception>
    public static IReadOnlyList<TableCopyResult> Run(StoreAddress from, StoreAddress to, Action<int>? opened = null, Action<string, long>? progress = null)
    {
        ArgumentNullException.ThrowIfNull(from);
        ArgumentNullException.ThrowIfNull(to);
        using var source = new HumWatchStore(Validated(from, "--from"), TimeProvider.System);
        using var target = new HumWatchStore(Validated(to, "--to"), TimeProvider.System);
        opened?.Invoke(source.SchemaVersion);
        return source.Connection.Run(s => target.Connection.Run(t => StoreCopy.Copy(s, t, target.Connection.AfterRowsCopiedWithIds, progress)));
    }

    private static StoreOptions Validated(StoreAddress address, string option)
    {
        var options = address.Options();
        var errors = options.Validate();
        return errors.Count == 0 ? options : throw new InvalidOperationException($"{option} {address.Display}: {string.Join(" ", errors)}");
    }
}
