using System.Data.Common;

namespace HumWatch.Host.Store;

/// <summary>
/// The <c>file_journal</c> table: each dropped file's content (SHA-256 and size) is processed exactly once across
/// restarts and across the instances sharing the store. Also remembers which contents a worker of this process holds
/// right now.
/// </summary>
/// <param name="connection">The store's connection.</param>
/// <param name="instance">This instance's name, recorded as the claimant; null (tools, older tests) claims as no instance.</param>
internal sealed class FileJournal(StoreConnection connection, string? instance = null)
{
    // One statement decides a claim, inside the database: a new content is inserted; a 'received' row (an interrupted
    // attempt) is taken over only when its claimant is no instance, this instance (a restart), or an instance the
    // instances table marks stopped. A row another live instance holds, or an archived or rejected one, is left alone,
    // and the affected-row count (0) says so. Two instances racing for one content: the unique (sha256, size_bytes)
    // lets exactly one insert win; the other's ON CONFLICT finds the winner's row and its WHERE refuses it.
    private static readonly string Claim = $"""
        INSERT INTO file_journal (path, size_bytes, mtime_utc_ms, sha256, state, utc_ms, attempts, instance)
        VALUES (@path, @size, @mtime, @sha, 'received', @utc, 1, @me)
        ON CONFLICT (sha256, size_bytes) DO UPDATE SET
            path = excluded.path, mtime_utc_ms = excluded.mtime_utc_ms, utc_ms = excluded.utc_ms,
            attempts = file_journal.attempts + 1, instance = excluded.instance
        WHERE file_journal.state = 'received' AND {Sql.HolderReplaceable("file_journal.instance")}
        """;

    // Touched only inside connection.Run, so the store's lock guards it too.
    private readonly HashSet<(string Sha256, long SizeBytes)> _inProgress = [];

    /// <summary>
    /// Claims a file for processing, exactly once across restarts and instances. True when the caller should process
    /// it: it is new, or an earlier attempt was interrupted (state still received) by this instance, by no instance, or
    /// by an instance since marked stopped. False when it was already archived or rejected, when another worker of this
    /// process holds it, or when another live instance does; <paramref name="entry"/> then tells the stored state.
    /// </summary>
    public bool TryBegin(string path, long sizeBytes, DateTimeOffset modifiedUtc, string sha256, out FileJournalEntry entry)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(path);
        ArgumentOutOfRangeException.ThrowIfNegative(sizeBytes);
        ArgumentException.ThrowIfNullOrWhiteSpace(sha256);
        var hash = sha256.ToLowerInvariant();
        var now = connection.TimeProvider.GetUtcNow().ToUnixTimeMilliseconds();
        var (claimed, found) = connection.Run(c =>
        {
            if (_inProgress.Contains((hash, sizeBytes)))
            {
                return (false, Find(c, hash, sizeBytes)!);
            }

            using var command = Sql.Command(c, Claim);
            Sql.Add(command, "@path", path);
            Sql.Add(command, "@size", sizeBytes);
            Sql.Add(command, "@mtime", modifiedUtc.ToUnixTimeMilliseconds());
            Sql.Add(command, "@sha", hash);
            Sql.Add(command, "@utc", now);
            Sql.Add(command, "@me", instance);
            var won = command.ExecuteNonQuery() == 1;
            if (won)
            {
                _inProgress.Add((hash, sizeBytes));
            }

            return (won, Find(c, hash, sizeBytes)!);
        });
        entry = found;
        return claimed;
    }

    /// <summary>Records the outcome of a file claimed with <see cref="TryBegin"/>.</summary>
    /// <exception cref="InvalidOperationException">The file was not claimed, or is already complete.</exception>
    public FileJournalEntry Complete(string sha256, long sizeBytes, FileJournalState state, string? reportPath = null, string? reason = null)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(sha256);
        if (state == FileJournalState.Received)
        {
            throw new ArgumentOutOfRangeException(nameof(state), state, "A file completes as archived or rejected.");
        }

        var hash = sha256.ToLowerInvariant();
        return connection.Run(c =>
        {
            using var command = Sql.Command(c, """
                UPDATE file_journal SET state = @state, report_path = @report, reason = @reason, utc_ms = @utc
                WHERE sha256 = @sha AND size_bytes = @size AND state = 'received'
                """);
            Sql.Add(command, "@state", StateText(state));
            Sql.Add(command, "@report", reportPath);
            Sql.Add(command, "@reason", reason);
            Sql.Add(command, "@utc", connection.TimeProvider.GetUtcNow().ToUnixTimeMilliseconds());
            Sql.Add(command, "@sha", hash);
            Sql.Add(command, "@size", sizeBytes);
            if (command.ExecuteNonQuery() == 0)
            {
                throw new InvalidOperationException($"Store {connection.Location}: file {hash} ({sizeBytes} bytes) is not being processed; complete it only after TryBegin.");
            }

            _inProgress.Remove((hash, sizeBytes));
            return Find(c, hash, sizeBytes)!;
        });
    }

    /// <summary>Gives up this process's claim of a file without an outcome (its check was cut short): it can be claimed again.</summary>
    public void Release(string sha256, long sizeBytes)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(sha256);
        var hash = sha256.ToLowerInvariant();
        connection.Run(_ => _inProgress.Remove((hash, sizeBytes)));
    }

    /// <summary>The journal entry of a file's content, or null.</summary>
    public FileJournalEntry? Find(string sha256, long sizeBytes)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(sha256);
        return connection.Run(c => Find(c, sha256.ToLowerInvariant(), sizeBytes));
    }

    private static FileJournalEntry? Find(DbConnection c, string sha256, long sizeBytes)
    {
        using var command = Sql.Command(c, """
            SELECT id, path, size_bytes, mtime_utc_ms, sha256, state, report_path, reason, utc_ms, attempts, instance
            FROM file_journal WHERE sha256 = @sha AND size_bytes = @size
            """);
        Sql.Add(command, "@sha", sha256);
        Sql.Add(command, "@size", sizeBytes);
        using var reader = command.ExecuteReader();
        if (!reader.Read())
        {
            return null;
        }

        return new FileJournalEntry(
            Sql.Int64(reader, 0), reader.GetString(1), Sql.Int64(reader, 2), DateTimeOffset.FromUnixTimeMilliseconds(Sql.Int64(reader, 3)),
            reader.GetString(4), ParseState(reader.GetString(5)), Sql.NullableString(reader, 6), Sql.NullableString(reader, 7),
            DateTimeOffset.FromUnixTimeMilliseconds(Sql.Int64(reader, 8)), Sql.Int32(reader, 9))
        {
            Instance = Sql.NullableString(reader, 10),
        };
    }

    private static string StateText(FileJournalState state) => state switch
    {
        FileJournalState.Archived => "archived",
        FileJournalState.Rejected => "rejected",
        _ => "received",
    };

    private static FileJournalState ParseState(string text) => text switch
    {
        "archived" => FileJournalState.Archived,
        "rejected" => FileJournalState.Rejected,
        _ => FileJournalState.Received,
    };
}
