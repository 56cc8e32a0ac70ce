namespace HumWatch.Formats.Wire;

/// <summary>A refused wire message: the reason code, the stream when the header named a valid one, and a readable message.</summary>
/// <param name="Reason">Counted reason code.</param>
/// <param name="StreamId">Stream id from the header when it was readable and valid; otherwise null.</param>
/// <param name="Message">One sentence naming the stream (when known) and the problem.</param>
public sealed record WireRejection(WireRejectReason Reason, string? StreamId, string Message);
