using HumWatch.Core.Ledger;

namespace HumWatch.Host.Store;

/// <summary>Durable home of minute rows; <see cref="LedgerTable"/> in production.</summary>
internal interface ILedgerStore
{
    /// <summary>Adds rows in one transaction, skipping re-delivered ones; returns how many were new. Throws when the write fails.</summary>
    int AddMinuteRows(IReadOnlyList<MinuteRow> rows);
}
