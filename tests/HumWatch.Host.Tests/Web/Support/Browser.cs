using OpenQA.Selenium;
using OpenQA.Selenium.Chrome;
using OpenQA.Selenium.Support.UI;

namespace HumWatch.Host.Tests.Web.Support;

/// <summary>Debian's chromium driven headless through Debian's chromium-driver; nothing is downloaded.</summary>
internal sealed class Browser : IDisposable
{
    public const string ChromiumPath = "/usr/bin/chromium";
    public const string DriverPath = "/usr/bin/chromedriver";

    private readonly TempFolder _profile = new();

    public Browser(int widthPx = 1400, int heightPx = 1000)
    {
        // The driver and the browser are named, so Selenium has nothing to look up or fetch.
        Environment.SetEnvironmentVariable("SE_OFFLINE", "true");
        var service = ChromeDriverService.CreateDefaultService(Path.GetDirectoryName(DriverPath)!, Path.GetFileName(DriverPath));
        service.SuppressInitialDiagnosticInformation = true;
        service.HideCommandPromptWindow = true;
        var options = new ChromeOptions { BinaryLocation = ChromiumPath };
        options.AddArguments(
            "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking",
            "--disable-component-update", "--disable-sync", $"--user-data-dir={_profile.Path}", $"--window-size={widthPx},{heightPx}");
        Driver = new ChromeDriver(service, options, TimeSpan.FromSeconds(60));
    }

    /// <summary>Why the browser cannot run here, or null.</summary>
    public static string? WhyUnavailable =>
        !File.Exists(ChromiumPath) ? $"needs Debian's chromium: {ChromiumPath} is not installed (.ci/run installs it with apt)"
        : !File.Exists(DriverPath) ? $"needs Debian's chromium-driver: {DriverPath} is not installed (.ci/run installs it with apt)"
        : null;

    public ChromeDriver Driver { get; }

    /// <summary>Waits (bounded) until <paramref name="condition"/> returns something other than null or false.</summary>
    public T WaitUntil<T>(Func<IWebDriver, T> condition, string what, int timeoutSeconds = 60)
    {
        var wait = new WebDriverWait(Driver, TimeSpan.FromSeconds(timeoutSeconds)) { Message = what, PollingInterval = TimeSpan.FromMilliseconds(200) };
        wait.IgnoreExceptionTypes(typeof(NoSuchElementException), typeof(StaleElementReferenceException));
        return wait.Until(condition);
    }

    /// <summary>Saves the window as PNG to <paramref name="path"/>.</summary>
    public void Screenshot(string path)
    {
        Directory.CreateDirectory(Path.GetDirectoryName(path)!);
        Driver.GetScreenshot().SaveAsFile(path);
    }

    public void Dispose()
    {
        Driver.Quit();
        Driver.Dispose();
        _profile.Dispose();
    }
}
