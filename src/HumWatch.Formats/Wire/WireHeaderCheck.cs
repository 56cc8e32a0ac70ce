using System.Globalization;

namespace HumWatch.Formats.Wire;

/// <summary>What the header fields must say together, and the one wording of every refusal (naming the stream when the header named a valid one).</summary>
internal static class WireHeaderCheck
{
    /// <summary>Null when the fields describe a chunk of a valid stream; else the refusal. <paramref name="streamId"/> is the valid id once known.</summary>
    public static WireRejection? Check(ref WireHeaderFields fields, out string? streamId)
    {
        streamId = null;
        if (!fields.Has(WireField.Version))
        {
            return new WireRejection(WireRejectReason.MissingField, null, "header has no 'v' (protocol version)");
        }

        if (fields.VersionText is not null || fields.Version != ChunkWireCodec.ProtocolVersion)
        {
            var seen = fields.VersionText ?? fields.Version.ToString(CultureInfo.InvariantCulture);
            return Rejection(WireRejectReason.UnknownVersion, ValidOrNull(fields.StreamId),
                $"protocol version '{ChunkWireCodec.Printable(seen)}' is not supported (this build reads v{ChunkWireCodec.ProtocolVersion})");
        }

        if (fields.StreamId is null)
        {
            return fields.Has(WireField.Stream)
                ? new WireRejection(WireRejectReason.BadStreamId, null, "'stream' must be a string id")
                : new WireRejection(WireRejectReason.MissingField, null, "header has no 'stream' id");
        }

        if (!ChunkWireCodec.IsValidStreamId(fields.StreamId))
        {
            return new WireRejection(WireRejectReason.BadStreamId, null,
                $"stream id '{ChunkWireCodec.Printable(fields.StreamId)}' is not 1–{ChunkWireCodec.MaxStreamIdLength} characters of [A-Za-z0-9._-]");
        }

        streamId = fields.StreamId;
        if (fields.ErrorReason is { } reason)
        {
            return Rejection(reason, streamId, fields.ErrorMessage!);
        }

        if (!fields.Has(WireField.Rate))
        {
            return Rejection(WireRejectReason.MissingField, streamId, "header has no 'fs' (sample rate in Hz)");
        }

        if (!double.IsFinite(fields.SampleRateHz) || fields.SampleRateHz <= 0 || fields.SampleRateHz > ChunkWireCodec.MaxSampleRateHz)
        {
            return Rejection(WireRejectReason.BadSampleRate, streamId,
                $"'fs' = {fields.SampleRateHz.ToString(CultureInfo.InvariantCulture)} Hz is outside (0, {ChunkWireCodec.MaxSampleRateHz.ToString(CultureInfo.InvariantCulture)}] Hz");
        }

        if (!fields.Has(WireField.Channels))
        {
            return Rejection(WireRejectReason.MissingField, streamId, "header has no 'channels' (list of labels)");
        }

        if (fields.Channels!.Count == 0)
        {
            return Rejection(WireRejectReason.BadChannels, streamId, "'channels' is empty; a stream needs at least one channel");
        }

        if (!fields.Has(WireField.Unit))
        {
            return Rejection(WireRejectReason.MissingField, streamId, "header has no 'unit' (uV, mV or V)");
        }

        if (!fields.Has(WireField.Index))
        {
            return Rejection(WireRejectReason.MissingField, streamId, "header has no 'index' (first sample's index since the stream's start)");
        }

        return null;
    }

    /// <summary>The first label that appears twice, or null.</summary>
    public static string? FindDuplicate(List<string> labels)
    {
        if (labels.Count < 2)
        {
            return null;
        }

        var seen = new HashSet<string>(labels.Count, StringComparer.Ordinal);
        foreach (var label in labels)
        {
            if (!seen.Add(label))
            {
                return label;
            }
        }

        return null;
    }

    /// <summary>"stream 'id': " before a message about a known stream; nothing when the stream is unknown.</summary>
    public static string Subject(string? streamId) => streamId is null ? string.Empty : $"stream '{streamId}': ";

    public static WireRejection Rejection(WireRejectReason reason, string? streamId, string problem) =>
        new(reason, streamId, Subject(streamId) + problem);

    private static string? ValidOrNull(string? streamId) => streamId is not null && ChunkWireCodec.IsValidStreamId(streamId) ? streamId : null;
}
