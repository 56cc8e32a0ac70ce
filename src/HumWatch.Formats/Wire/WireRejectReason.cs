namespace HumWatch.Formats.Wire;

/// <summary>Why an incoming wire message was refused. Each value is counted separately.</summary>
public enum WireRejectReason
{
    /// <summary>Header frame is not valid UTF-8 JSON, or not a JSON object.</summary>
    MalformedJson,

    /// <summary>The message did not have exactly two frames.</summary>
    WrongFrameCount,

    /// <summary>Sample frame length is zero or not a multiple of 4 × channels.</summary>
    SampleLength,

    /// <summary>A sample is NaN or infinite.</summary>
    NonFiniteSample,

    /// <summary>Header <c>v</c> is not a version this build reads.</summary>
    UnknownVersion,

    /// <summary>A required header field is absent.</summary>
    MissingField,

    /// <summary><c>stream</c> is not 1–64 characters of [A-Za-z0-9._-].</summary>
    BadStreamId,

    /// <summary><c>fs</c> is not a positive number of Hz up to the protocol maximum.</summary>
    BadSampleRate,

    /// <summary><c>channels</c> is empty, too long, or has an empty or duplicate label.</summary>
    BadChannels,

    /// <summary><c>unit</c> is not one of uV, mV, V.</summary>
    BadUnit,

    /// <summary><c>index</c> is not a non-negative 64-bit integer.</summary>
    BadIndex,

    /// <summary><c>t0</c> is not an ISO-8601 time with a UTC designator or offset.</summary>
    BadStartTime,

    /// <summary>The whole message is larger than the configured limit.</summary>
    TooLarge,
}
