namespace HumWatch.Host.Ingest;

/// <summary>Socket ingest settings, bound from the "Ingest" configuration section.</summary>
public sealed class IngestOptions
{
    /// <summary>Configuration section name ("Ingest").</summary>
    public const string SectionName = "Ingest";

    /// <summary>Default endpoint when none is configured: one PULL socket bound to tcp://127.0.0.1:5710.</summary>
    public const string DefaultAddress = "tcp://127.0.0.1:5710";

    /// <summary>Default message size limit, 16 MiB.</summary>
    public const long DefaultMaxMessageBytes = 16L * 1024 * 1024;

    /// <summary>Default queue capacity, 65 536 chunks (about 30 s of 1000 streams sending 0.5 s chunks).</summary>
    public const int DefaultQueueCapacity = 65_536;

    /// <summary>Default budget for decoded samples in flight, 256 MiB (about 4 s of 1000 streams of 32 channels at 500 Hz).</summary>
    public const long DefaultBufferBytes = 256L * 1024 * 1024;

    /// <summary>Sockets to receive chunks on. When empty, one PULL socket bound to <see cref="DefaultAddress"/>.</summary>
    public IList<IngestEndpointOptions> Endpoints { get; } = [];

    /// <summary>Largest accepted message (all frames), 1 KiB to 1 GiB. The default is 16 MiB.</summary>
    public long MaxMessageBytes { get; set; } = DefaultMaxMessageBytes;

    /// <summary>Chunks held in the queue between the sockets and the streams, 1 to 1 000 000; when full, chunks are dropped and counted. Guards against floods of tiny chunks; <see cref="BufferBytes"/> bounds the memory. The default is 65 536.</summary>
    public int QueueCapacity { get; set; } = DefaultQueueCapacity;

    /// <summary>
    /// Most bytes of decoded samples held between the sockets and the analysis (the ingest queue, every stream's queue,
    /// and arrays kept for reuse), 1 MiB to 64 GiB and at least <see cref="MaxMessageBytes"/>; when spent, chunks are
    /// dropped and counted. Each stream needs 4 bytes × channels × rate per second of buffer. The default is 256 MiB.
    /// </summary>
    public long BufferBytes { get; set; } = DefaultBufferBytes;

    /// <summary>Shortest interval between repeated warnings about the same stream's drops or rejections. The default is 10 s.</summary>
    public TimeSpan WarningInterval { get; set; } = TimeSpan.FromSeconds(10);

    /// <summary>Most warnings about drops and rejections written per <see cref="WarningInterval"/> across all streams, 1 to 10 000; the rest are counted and summed up in one line per interval. The default is 20.</summary>
    public int MaxWarningsPerInterval { get; set; } = 20;

    /// <summary>Most channels one stream may declare, 1 to 1024 (the protocol's limit); larger headers are refused as BadChannels. The default is 256.</summary>
    public int MaxChannels { get; set; } = 256;

    /// <summary>Highest sample rate a stream may declare, Hz, 1 to 1 000 000 (the protocol's limit); higher ones are refused as BadSampleRate. The default is 20 000 Hz.</summary>
    public double MaxSampleRateHz { get; set; } = 20_000;

    /// <summary>Most samples per channel in one chunk, 1 to 16 777 216; longer chunks are refused as TooLarge. The default is 1 048 576 (about 17 min at 1 kHz; the message size limit usually binds first).</summary>
    public int MaxChunkSamples { get; set; } = 1 << 20;

    /// <summary>Largest header frame, bytes, 256 to 1 MiB; larger ones are refused as TooLarge before they are parsed. The default is 64 KiB (256 labels of 64 characters fit).</summary>
    public int MaxHeaderBytes { get; set; } = 64 * 1024;

    /// <summary>
    /// How far a stream may run ahead of its declared rate, as a factor, 1 to 100: samples beyond
    /// <see cref="RateBurstSeconds"/> of them plus this factor × rate × elapsed time are dropped (reason RateExceeded),
    /// not buffered. The default is 2.
    /// </summary>
    public double RateAllowance { get; set; } = 2;

    /// <summary>Seconds of samples (at the declared rate) a stream may send at once, on top of its running allowance, 1 to 3600 (a sender catching up after a network stall). The default is 600 s (a recorder replaying ten minutes it held back during an outage).</summary>
    public double RateBurstSeconds { get; set; } = 600;

    /// <summary>Messages ZeroMQ queues per connected sender before it stops reading that sender's TCP connection, 1 to 100 000. Bounds a sender's memory in the service to this × its message size. The default is 1000.</summary>
    public int ReceiveHighWatermark { get; set; } = 1000;

    /// <summary>The configured endpoints, or the single default one.</summary>
    internal IReadOnlyList<IngestEndpointOptions> EffectiveEndpoints() =>
        Endpoints.Count > 0 ? [.. Endpoints] : [new IngestEndpointOptions()];
}

/// <summary>One ingest socket.</summary>
public sealed class IngestEndpointOptions
{
    /// <summary>ZeroMQ address (tcp://host:port, ipc://path, inproc://name). The default is tcp://127.0.0.1:5710; with bind, port * picks a free port.</summary>
    public string Address { get; set; } = IngestOptions.DefaultAddress;

    /// <summary>Bind (senders connect to us) or connect (we connect to a sender that binds). The default is bind.</summary>
    public IngestSocketMode Mode { get; set; } = IngestSocketMode.Bind;

    /// <summary>PULL (work distribution, every message once) or SUB (from a publisher). The default is PULL.</summary>
    public IngestSocketType SocketType { get; set; } = IngestSocketType.Pull;

    /// <summary>SUB only: subscribe to messages whose header frame starts with this text. The default (empty) receives everything.</summary>
    public string SubscribePrefix { get; set; } = string.Empty;

    /// <summary>Must be true to bind to an address other than loopback; such a bind is logged as a warning. The default is false.</summary>
    public bool AllowNonLoopback { get; set; }

    /// <summary>
    /// Must be true to use a tcp address other than loopback (bind or connect) without <see cref="Curve"/>: the data
    /// then travels unencrypted and any host that reaches the port can send it. Logged as a warning. The default is false.
    /// </summary>
    public bool AllowInsecureRemote { get; set; }

    /// <summary>Optional CurveZMQ encryption for off-host senders; null (the default) means plain TCP.</summary>
    public IngestCurveOptions? Curve { get; set; }
}

/// <summary>CurveZMQ settings for one ingest socket, which acts as the CURVE server.</summary>
public sealed class IngestCurveOptions
{
    /// <summary>Path of the server key pair file (JSON with Z85 "publicKey" and "secretKey"); senders need its public key.</summary>
    public string ServerKeyFile { get; set; } = string.Empty;

    /// <summary>
    /// Optional text file of the senders' CURVE public keys (one Z85 key per line, # comments). When set, a
    /// message is accepted only with a proof frame made with a listed key's secret (docs/protocol.md); others are refused,
    /// counted and logged. Empty (the default) accepts every sender that knows the server key.
    /// </summary>
    public string AllowedClientKeysFile { get; set; } = string.Empty;
}

/// <summary>Whether an ingest socket binds or connects.</summary>
public enum IngestSocketMode
{
    /// <summary>Listen on the address; senders connect.</summary>
    Bind,

    /// <summary>Connect to a sender that listens on the address.</summary>
    Connect,
}

/// <summary>ZeroMQ socket pattern of an ingest socket.</summary>
public enum IngestSocketType
{
    /// <summary>PULL, paired with senders' PUSH sockets.</summary>
    Pull,

    /// <summary>SUB, paired with a sender's PUB socket.</summary>
    Sub,
}
