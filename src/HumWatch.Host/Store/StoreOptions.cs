using Npgsql;

namespace HumWatch.Host.Store;

/// <summary>The database engine behind the store (docs/store.md, "Providers").</summary>
public enum StoreProvider
{
    /// <summary>One SQLite file (Store:Path): the embedded default for one box.</summary>
    Sqlite,

    /// <summary>A PostgreSQL database (Store:ConnectionString or Store:ConnectionStringFile), shared by several instances.</summary>
    Postgres,
}

/// <summary>Where and how the store is kept. Bound from config section "Store".</summary>
public sealed class StoreOptions
{
    /// <summary>The database engine; the default is Sqlite.</summary>
    public StoreProvider Provider { get; set; } = StoreProvider.Sqlite;

    /// <summary>SQLite: database file; relative paths resolve against the working directory. The default is "humwatch-data/humwatch.db", as the embedded defaults set it.</summary>
    public string Path { get; set; } = "humwatch-data/humwatch.db";

    /// <summary>SQLite: how long a statement waits for a lock held by another connection, ms. The default is 5000 ms.</summary>
    public int BusyTimeoutMs { get; set; } = 5000;

    /// <summary>PostgreSQL: an Npgsql connection string. Prefer <see cref="ConnectionStringFile"/> for one that holds a password.</summary>
    public string? ConnectionString { get; set; }

    /// <summary>PostgreSQL: a file holding the connection string (the place for credentials); relative paths resolve against the working directory.</summary>
    public string? ConnectionStringFile { get; set; }

    /// <summary>One message per problem, each naming the configuration key; empty when valid. Never quotes a connection string.</summary>
    public IReadOnlyList<string> Validate(string prefix = "Store")
    {
        var errors = new List<string>();
        if (!Enum.IsDefined(Provider))
        {
            errors.Add($"{prefix}:Provider must be one of {string.Join(", ", Enum.GetNames<StoreProvider>())} (got {(int)Provider}).");
        }

        if (Provider == StoreProvider.Postgres)
        {
            ValidatePostgres(prefix, errors);
        }
        else
        {
            ValidateSqlite(prefix, errors);
        }

        return errors;
    }

    /// <summary>
    /// The PostgreSQL connection string: <see cref="ConnectionString"/>, or the trimmed content of <see cref="ConnectionStringFile"/>.
    /// </summary>
    /// <exception cref="InvalidOperationException">Neither or both are set, or the file cannot be read; the message names the key, never the string.</exception>
    internal string ResolveConnectionString(string prefix = "Store")
    {
        var errors = new List<string>();
        var text = ReadConnectionString(prefix, errors);
        if (errors.Count > 0 || text is null)
        {
            throw new InvalidOperationException(string.Join(" ", errors));
        }

        return text;
    }

    /// <summary>Where the store is, as messages name it: the SQLite file's absolute path, or where the PostgreSQL connection string points (no credentials).</summary>
    /// <exception cref="InvalidOperationException">PostgreSQL, and the connection string cannot be resolved.</exception>
    public string Describe() => Provider == StoreProvider.Postgres ? DescribePostgres(ResolveConnectionString()) : System.IO.Path.GetFullPath(Path);

    /// <summary>
    /// Where a PostgreSQL connection string points, without credentials: "host:port/database as user". Only the host,
    /// port, database and user are read back, so no password (nor any other part) ever reaches a log or a message.
    /// </summary>
    internal static string DescribePostgres(string connectionString)
    {
        try
        {
            var b = new NpgsqlConnectionStringBuilder(connectionString);
            return $"postgres {b.Host ?? "localhost"}:{b.Port}/{b.Database ?? b.Username ?? "?"} as {b.Username ?? "?"}";
        }
        catch (ArgumentException)
        {
            return "postgres (connection string not readable)";
        }
    }

    private void ValidateSqlite(string prefix, List<string> errors)
    {
        if (string.IsNullOrWhiteSpace(Path))
        {
            errors.Add($"{prefix}:Path must name the database file.");
        }
        else if (Path.IndexOfAny(System.IO.Path.GetInvalidPathChars()) >= 0)
        {
            errors.Add($"{prefix}:Path contains characters not allowed in a path (got \"{Path}\").");
        }

        if (BusyTimeoutMs is < 0 or > 600_000)
        {
            errors.Add($"{prefix}:BusyTimeoutMs must be between 0 and 600000 ms (got {BusyTimeoutMs}).");
        }
    }

    private void ValidatePostgres(string prefix, List<string> errors)
    {
        var text = ReadConnectionString(prefix, errors);
        if (text is null)
        {
            return;
        }

        try
        {
            var builder = new NpgsqlConnectionStringBuilder(text);
            if (string.IsNullOrWhiteSpace(builder.Host))
            {
                errors.Add($"{prefix}:{SourceKey} must name the server (Host=...).");
            }
        }
        catch (ArgumentException)
        {
            // The builder's message may quote the string, and with it a password: name only the key.
            errors.Add($"{prefix}:{SourceKey} is not a valid PostgreSQL connection string (Host=...;Port=...;Database=...;Username=...).");
        }
    }

    private string SourceKey => string.IsNullOrWhiteSpace(ConnectionStringFile) ? nameof(ConnectionString) : nameof(ConnectionStringFile);

    private string? ReadConnectionString(string prefix, List<string> errors)
    {
        var inline = !string.IsNullOrWhiteSpace(ConnectionString);
        var file = !string.IsNullOrWhiteSpace(ConnectionStringFile);
        if (inline == file)
        {
            errors.Add(inline
                ? $"{prefix}:ConnectionString and {prefix}:ConnectionStringFile are both set; with {prefix}:Provider Postgres set exactly one of them (the file is the place for a password)."
                : $"{prefix}:Provider Postgres needs {prefix}:ConnectionString or {prefix}:ConnectionStringFile (a file holding the connection string, the place for a password).");
            return null;
        }

        if (inline)
        {
            return ConnectionString!.Trim();
        }

        var full = System.IO.Path.GetFullPath(ConnectionStringFile!);
        try
        {
            var text = File.ReadAllText(full).Trim();
            if (text.Length == 0)
            {
                errors.Add($"{prefix}:ConnectionStringFile {full} is empty; it must hold the PostgreSQL connection string.");
                return null;
            }

            return text;
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or NotSupportedException or System.Security.SecurityException)
        {
            errors.Add(ex is FileNotFoundException or DirectoryNotFoundException
                ? $"{prefix}:ConnectionStringFile {full} does not exist."
                : $"{prefix}:ConnectionStringFile {full} cannot be read ({ex.GetType().Name}); the service must be able to read it.");
            return null;
        }
    }
}
