using HumWatch.Core.Ledger;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Store;

namespace HumWatch.Host.Composition;

/// <summary>Ledger rows go to the store through the <see cref="LedgerWriter"/>, which keeps refused rows (bounded) for the next write.</summary>
internal sealed class StoreMinuteRowWriter(LedgerWriter writer) : IMinuteRowWriter
{
    public void Write(IReadOnlyList<MinuteRow> rows)
    {
        foreach (var row in rows)
        {
            writer.OnMinuteRow(row);
        }

        writer.Flush();
    }
}
