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

        try
        {
            using (host)
            {
                try
                {
                    host.Start();
                }
                catch (Exception ex) when (ex is InvalidOperationException or IOException or UnauthorizedAccessException or ArgumentException or NetMQException)
                {
                    // A socket that cannot bind or a folder that cannot be created stops the start with one clear line.
                    Console.Error.WriteLine($"humwatch {command}: cannot start: {Innermost(ex).Message}");
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

    private static Exception Innermost(Exception ex)
    {
        while (ex.InnerException is not null && ex is not ConfigurationException)
        {
            ex = ex.InnerException;
        }

        return ex;
    }
}
