namespace HumWatch.Host.Store;

/// <summary>Where and how the SQLite store is kept. Bound from config section "Store".</summary>
public sealed class StoreOptions
{
    /// <summary>Database file; relative paths resolve against the working directory. The default is "humwatch-data/humwatch.db", as the embedded defaults set it.</summary>
    public string Path { get; set; } = "humwatch-data/humwatch.db";

    /// <summary>How long a statement waits for a lock held by another connection, ms. The default is 5000 ms.</summary>
    public int BusyTimeoutMs { get; set; } = 5000;

    /// <summary>One message per problem, each naming the configuration key; empty when valid.</summary>
    public IReadOnlyList<string> Validate(string prefix = "Store")
    {
        var errors = new List<string>();
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

        return errors;
    }
}
