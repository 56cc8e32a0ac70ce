using System.Data.Common;
using Microsoft.Data.Sqlite;
using Npgsql;

namespace HumWatch.Host.Store;

/// <summary>Why the store refuses writes, as the status message and the log name it.</summary>
internal enum StoreFaultKind
{
    /// <summary>Writes work.</summary>
    None,

    /// <summary>SQLITE_FULL: the disk, or the file's page limit, is full; PostgreSQL's disk_full (53100).</summary>
    Full,

    /// <summary>SQLITE_READONLY, or the operating system refuses the write: a read-only file, folder or file system; PostgreSQL's read_only_sql_transaction (25006) or insufficient_privilege (42501).</summary>
    ReadOnly,

    /// <summary>SQLITE_BUSY or SQLITE_LOCKED past the busy timeout: another process holds the file locked; PostgreSQL's lock_not_available (55P03) or deadlock_detected (40P01).</summary>
    Locked,

    /// <summary>Any other failure: SQLITE_IOERR, a damaged file, a closed store, a PostgreSQL server that cannot be reached.</summary>
    Failing,
}

/// <summary>Sorts store failures into <see cref="StoreFaultKind"/>s by their SQLite result code or PostgreSQL SQLSTATE.</summary>
internal static class StoreFaults
{
    // Primary result codes, https://www.sqlite.org/rescode.html (the low 8 bits of an extended code).
    private const int SqliteBusy = 5;
    private const int SqliteLocked = 6;
    private const int SqliteReadOnly = 8;
    private const int SqliteFull = 13;

    // Win32 ERROR_HANDLE_DISK_FULL and ERROR_DISK_FULL as HRESULTs; Unix ENOSPC reaches SQLite, which says SQLITE_FULL.
    private const int DiskFullHandle = unchecked((int)0x80070027);
    private const int DiskFull = unchecked((int)0x80070070);

    /// <summary>The kind of <paramref name="failure"/>: the first database error in its chain decides, else its .NET type.</summary>
    public static StoreFaultKind Classify(Exception failure)
    {
        ArgumentNullException.ThrowIfNull(failure);
        for (var ex = failure; ex is not null; ex = ex.InnerException)
        {
            switch (ex)
            {
                case SqliteException sqlite:
                    return (sqlite.SqliteErrorCode & 0xFF) switch
                    {
                        SqliteFull => StoreFaultKind.Full,
                        SqliteReadOnly => StoreFaultKind.ReadOnly,
                        SqliteBusy or SqliteLocked => StoreFaultKind.Locked,
                        _ => StoreFaultKind.Failing,
                    };
                // SQLSTATE codes: PostgreSQL documentation, Appendix A "PostgreSQL Error Codes".
                case PostgresException postgres:
                    return postgres.SqlState switch
                    {
                        PostgresErrorCodes.DiskFull => StoreFaultKind.Full,
                        PostgresErrorCodes.ReadOnlySqlTransaction or PostgresErrorCodes.InsufficientPrivilege => StoreFaultKind.ReadOnly,
                        PostgresErrorCodes.LockNotAvailable or PostgresErrorCodes.DeadlockDetected => StoreFaultKind.Locked,
                        _ => StoreFaultKind.Failing,
                    };
                case NpgsqlException:
                    return StoreFaultKind.Failing;
                case UnauthorizedAccessException:
                    return StoreFaultKind.ReadOnly;
                case IOException io when io.HResult is DiskFull or DiskFullHandle:
                    return StoreFaultKind.Full;
            }
        }

        return StoreFaultKind.Failing;
    }

    /// <summary>True when <paramref name="failure"/> came from the database (SQLite or PostgreSQL, anywhere in its chain): the store, not the input, failed.</summary>
    public static bool IsStoreFailure(Exception failure)
    {
        for (var ex = failure; ex is not null; ex = ex.InnerException)
        {
            if (ex is DbException)
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>The spelling in status messages and logs: "ok", "full", "read-only", "locked", "failing".</summary>
    public static string ToText(this StoreFaultKind kind) => kind switch
    {
        StoreFaultKind.None => "ok",
        StoreFaultKind.Full => "full",
        StoreFaultKind.ReadOnly => "read-only",
        StoreFaultKind.Locked => "locked",
        _ => "failing",
    };

    /// <summary>What the operator can check, one phrase per kind.</summary>
    public static string Hint(this StoreFaultKind kind) => kind switch
    {
        StoreFaultKind.Full => "free space on its disk",
        StoreFaultKind.ReadOnly => "that the file, its folder and the file system are writable by the service",
        StoreFaultKind.Locked => "which other process holds the file open in a write transaction",
        _ => "the disk and the file (PRAGMA integrity_check)",
    };
}
