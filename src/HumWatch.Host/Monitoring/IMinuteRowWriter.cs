using HumWatch.Core.Ledger;

namespace HumWatch.Host.Monitoring;

/// <summary>Where completed ledger minutes go (the store, or a test double).</summary>
internal interface IMinuteRowWriter
{
    /// <summary>Writes the rows; throws on failure so the caller can keep them for a retry.</summary>
    void Write(IReadOnlyList<MinuteRow> rows);
}
