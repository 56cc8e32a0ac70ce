using System.Net.Sockets;
using NetMQ;

namespace HumWatch.Host;

/// <summary>
/// The service cannot start for a reason a person can fix (a port in use, a folder it cannot write, a store it cannot
/// open). <see cref="Exception.Message"/> is the whole explanation, naming the setting that changes it; callers print it
/// as it is, without a stack trace.
/// </summary>
public sealed class StartFailureException : InvalidOperationException
{
    public StartFailureException(string message)
        : base(message)
    {
    }

    public StartFailureException(string message, Exception inner)
        : base(message, inner)
    {
    }

    /// <summary>A socket could not bind or connect; the message says which setting moves it and, for a port in use, that another HumWatch may hold it.</summary>
    /// <param name="settingKey">The key of the address, e.g. Publish:Endpoint or Ingest:Endpoints:0:Address.</param>
    /// <param name="address">The address as configured.</param>
    /// <param name="verb">"bind" or "connect".</param>
    /// <param name="error">What the socket library threw.</param>
    public static StartFailureException ForSocket(string settingKey, string address, string verb, Exception error)
    {
        ArgumentNullException.ThrowIfNull(error);
        if (IsAddressInUse(error))
        {
            return new StartFailureException(
                $"{address} is already in use ({settingKey}). Another HumWatch — a second 'run' or 'demo' — may be running; "
                + $"stop it, or give this one a free port, e.g. --set {settingKey}={OtherPortExample(address)}",
                error);
        }

        return new StartFailureException($"{settingKey} {address}: cannot {verb}: {Innermost(error).Message}", error);
    }

    /// <summary>True when <paramref name="error"/> or one of its causes says the address is taken.</summary>
    public static bool IsAddressInUse(Exception error)
    {
        for (Exception? e = error; e is not null; e = e.InnerException)
        {
            if (e is AddressAlreadyInUseException || e is SocketException { SocketErrorCode: SocketError.AddressAlreadyInUse })
            {
                return true;
            }
        }

        return false;
    }

    private static Exception Innermost(Exception error)
    {
        while (error.InnerException is not null)
        {
            error = error.InnerException;
        }

        return error;
    }

    /// <summary>The same address on port + 10 ("tcp://127.0.0.1:5711" → "tcp://127.0.0.1:5721"), or on * (any free port) when the port is not a number.</summary>
    private static string OtherPortExample(string address)
    {
        var colon = address.LastIndexOf(':');
        if (colon > 0 && int.TryParse(address.AsSpan(colon + 1), System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out var port) && port is > 0 and < 65526)
        {
            return address[..(colon + 1)] + (port + 10).ToString(System.Globalization.CultureInfo.InvariantCulture);
        }

        return colon > 0 ? address[..(colon + 1)] + "*" : address;
    }
}
