using HumWatch.Core.Alerts;

namespace HumWatch.Host.Store;

/// <summary>Durable home of alert events; <see cref="AlertTable"/> in production.</summary>
internal interface IAlertEventStore
{
    /// <summary>Commits one event; returns its row id. Throws when the write fails.</summary>
    long AppendAlert(AlertEvent alertEvent);
}
