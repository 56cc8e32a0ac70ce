using HumWatch.Core.Ledger;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Store;

namespace HumWatch.Host.Composition;

/// <summary>Ledger rows go to the SQLite store.</summary>
internal sealed class StoreMinuteRowWriter(HumWatchStore store) : IMinuteRowWriter
{
    public void Write(IReadOnlyList<MinuteRow> rows)
    {
        if (rows.Count > 0)
        {
            store.AddMinuteRows(rows);
        }
    }
}
