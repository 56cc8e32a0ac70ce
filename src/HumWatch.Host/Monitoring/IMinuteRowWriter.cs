using HumWatch.Core.Ledger;

namespace HumWatch.Host.Monitoring;

/// <summary>Where completed ledger minutes go (the store, or a test double).</summary>
internal interface IMinuteRowWriter
{
    /// <summary>Writes the rows, and any refused earlier; never throws (failures are kept for the next call and logged).</summary>
    void Write(IReadOnlyList<MinuteRow> rows);
}
