using HumWatch.Host;
using HumWatch.Host.Composition;
using HumWatch.Host.Configuration;
using Microsoft.Extensions.Hosting;
using NetMQ;

namespace HumWatch.Cli.Commands;

/// <summary>Builds and runs the service with the same error handling for `run` and `demo`.</summary>
internal static class ServiceRunner
{
    public static int Run(string command, HumWatchHostSettings settings, Action<IHost>? onStarted = null, Action? onStopped = null)
    {
        IHost host;
        try
        {
            host = HumWatchHost.Build(settings);
        }
        catch (ConfigurationException ex)
        {
            CommandSettings.WriteInvalid(command, ex, Console.Error);
            return ExitCodes.BadInput;
        }
        catch (StartFailureException ex)
        {
            Console.Error.WriteLine($"humwatch {command}: cannot start: {ex.Message}");
            return ExitCodes.BadInput;
        }

        try
        {
            using (host)
            {
                try
                {
                    host.Start();
                }
                catch (Exception ex) when (Unwrap(ex) is InvalidOperationException or IOException or UnauthorizedAccessException or ArgumentException or NetMQException)
                {
                    // A socket that cannot bind, a store that cannot be opened: one clear line. The service's own
                    // messages (StartFailureException) name the setting; anything else keeps its outermost message,
                    // which names what failed rather than the socket library's last word.
                    Console.Error.WriteLine($"humwatch {command}: cannot start: {Unwrap(ex).Message}");
                    return ExitCodes.BadInput;
                }

                onStarted?.Invoke(host);
                host.WaitForShutdown();
            }
        }
        finally
        {
            onStopped?.Invoke();

            // Sockets are closed by now; end NetMQ's background threads so the process exits promptly.
            NetMQConfig.Cleanup(block: false);
        }

        return ExitCodes.Ok;
    }

    /// <summary>The host rethrows a single start failure as is, several as an AggregateException; one is shown for one.</summary>
    private static Exception Unwrap(Exception ex) => ex is AggregateException { InnerExceptions.Count: 1 } aggregate ? Unwrap(aggregate.InnerExceptions[0]) : ex;
}
