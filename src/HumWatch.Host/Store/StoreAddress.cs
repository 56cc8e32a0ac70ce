namespace HumWatch.Host.Store;

/// <summary>
/// A store named on a command line: <c>sqlite:PATH</c>, <c>postgres:CONNECTION-STRING</c> or <c>postgres-file:PATH</c>
/// (a file that holds the connection string, so a password never shows in the process list or shell history).
/// </summary>
public sealed record StoreAddress(string Provider, string Target, bool TargetIsFile)
{
    public const string Sqlite = "sqlite";
    public const string Postgres = "postgres";

    /// <summary>How the store is named in messages: a path, or the connection string without its password.</summary>
    public string Display => Provider == Sqlite ? $"sqlite:{Path.GetFullPath(Target)}" : TargetIsFile ? $"postgres-file:{Target}" : StoreOptions.DescribePostgres(Target);

    /// <summary>Reads "kind:rest"; false with a message naming <paramref name="option"/> and the forms it takes.</summary>
    public static bool TryParse(string text, string option, out StoreAddress address, out string? error)
    {
        ArgumentNullException.ThrowIfNull(text);
        address = new StoreAddress(Sqlite, string.Empty, false);
        var colon = text.IndexOf(':', StringComparison.Ordinal);
        var kind = colon < 0 ? string.Empty : text[..colon];
        var rest = colon < 0 ? string.Empty : text[(colon + 1)..];
        error = null;
        switch (kind)
        {
            case Sqlite when rest.Length > 0:
                address = new StoreAddress(Sqlite, rest, true);
                return true;
            case Postgres when rest.Length > 0:
                address = new StoreAddress(Postgres, rest, false);
                return true;
            case "postgres-file" when rest.Length > 0:
                address = new StoreAddress(Postgres, rest, true);
                return true;
            default:
                error = $"{option} must be sqlite:PATH, postgres:CONNECTION-STRING or postgres-file:PATH (got \"{(kind is Postgres ? "postgres:…" : text)}\").";
                return false;
        }
    }

    /// <summary>Store options that open this store.</summary>
    internal StoreOptions Options() => Provider == Sqlite
        ? new StoreOptions { Path = Target }
        : TargetIsFile
            ? new StoreOptions { Provider = StoreProvider.Postgres, ConnectionStringFile = Target }
            : new StoreOptions { Provider = StoreProvider.Postgres, ConnectionString = Target };
}
