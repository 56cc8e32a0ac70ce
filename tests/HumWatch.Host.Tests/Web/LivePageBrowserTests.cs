using HumWatch.Host.Tests.Web.Support;
using OpenQA.Selenium;
using Xunit;

namespace HumWatch.Host.Tests.Web;

/// <summary>
/// The live page in a real browser, fed by the demo's three rooms over the real ingest socket: the rooms are listed,
/// a room turns to alert when its source switches on (by the event stream, without reloading), its view labels the
/// flagged line on the spectrum, and a room whose stream stops shows as silent. Screenshots of the run go to
/// HUMWATCH_SCREENSHOTS when set (docs/images in the README come from such a run).
/// </summary>
[Collection(LivePageCollection.Name)]
public sealed class LivePageBrowserTests
{
    [BrowserFact]
    public async Task The_page_follows_the_demo_rooms_through_alert_and_silence()
    {
        using var folder = new TempFolder();
        await using var page = await LivePage.StartAsync(folder.Path);
        using var player = new ScenarioPlayer(page.Service.IngestEndpoint, DateTimeOffset.UtcNow);
        using var browser = new Browser();
        var shots = Environment.GetEnvironmentVariable("HUMWATCH_SCREENSHOTS") is { Length: > 0 } dir ? dir : folder.File("screenshots");

        // 16 s of every room at once: an analysis span and a few frames each, before the birch room's monitor (20 s) is on.
        player.Advance(16);
        browser.Driver.Navigate().GoToUrl(page.Address);
        foreach (var room in player.RoomNames)
        {
            browser.WaitUntil(d => State(d, room) is "clean" or "affected", $"{room} listed with an analysed frame");
        }

        Assert.Equal(["birch-room", "cedar-room", "maple-room"], player.RoomNames);
        Assert.Equal("clean", State(browser.Driver, "birch-room"));

        // The monitor switches on at 20 s of the birch room's stream; the tile turns without a reload.
        var marker = browser.Driver.ExecuteScript("return window.humwatchStats.firstRender;");
        player.Advance(24);
        browser.WaitUntil(d => State(d, "birch-room") == "affected", "birch-room turns to alert");
        Assert.Equal(marker, browser.Driver.ExecuteScript("return window.humwatchStats.firstRender;"));
        var birch = Read(browser.Driver, "birch-room", "textContent");
        Assert.Contains("display 75 Hz h1", birch, StringComparison.Ordinal);
        Assert.Contains("about hints", birch, StringComparison.Ordinal);
        browser.WaitUntil(d => State(d, "cedar-room") == "affected", "cedar-room shows its mains");
        browser.Screenshot(Path.Combine(shots, "live-board.png"));

        // The room's own view: the flagged line carries its label on the spectrum.
        // (Tiles are redrawn as updates come, so the link is followed by its address rather than clicked.)
        var href = Read(browser.Driver, "birch-room", "href");
        Assert.EndsWith("/room/birch-room", href, StringComparison.Ordinal);
        browser.Driver.Navigate().GoToUrl(href);
        var label = browser.WaitUntil(d => d.FindElements(By.CssSelector("#spectrum text.line-label.flagged")).FirstOrDefault(e => e.Text == "display 75 Hz h1"), "the flagged 75 Hz line labelled on the spectrum");
        Assert.NotNull(label);
        browser.WaitUntil(d => d.FindElements(By.CssSelector("#recent tr")).Count > 0, "the room's recent alerts from the store");
        Assert.Contains("raised", browser.Driver.FindElement(By.Id("recent")).Text, StringComparison.Ordinal);
        var caution = browser.Driver.FindElement(By.Id("caution")).Text;
        Assert.Contains("not a medical device", caution, StringComparison.Ordinal);
        Assert.Contains("qualified staff", caution, StringComparison.Ordinal);
        browser.Driver.Manage().Window.Size = new System.Drawing.Size(1400, 2100);
        browser.WaitUntil(d => d.FindElements(By.CssSelector("#timeline table, #timeline p")).Count > 0, "today's timeline");
        browser.Screenshot(Path.Combine(shots, "live-room.png"));
        browser.Driver.Manage().Window.Size = new System.Drawing.Size(1400, 1000);

        // The maple room's recorder stops; the others go on.
        browser.Driver.Navigate().GoToUrl(page.Address);
        browser.WaitUntil(d => State(d, "maple-room") == "clean", "maple-room back on the board");
        player.Stop("maple-room");
        browser.WaitUntil(d => State(d, "maple-room") == "silent", "maple-room shows as silent");
        Assert.Contains("no data since", Read(browser.Driver, "maple-room", "textContent"), StringComparison.Ordinal);
        Assert.NotEqual("silent", State(browser.Driver, "birch-room"));
        browser.Screenshot(Path.Combine(shots, "live-board-silent.png"));

        // A phone-sized window: one column, nothing cut off.
        browser.Driver.Manage().Window.Size = new System.Drawing.Size(400, 900);
        browser.WaitUntil(d => Convert.ToDouble(((IJavaScriptExecutor)d).ExecuteScript("return document.querySelector(\"li[data-stream='birch-room']\").getBoundingClientRect().right;"), System.Globalization.CultureInfo.InvariantCulture) <= 400, "tiles fit a phone's width");
        browser.Screenshot(Path.Combine(shots, "live-phone.png"));
    }

    // Tiles are redrawn as updates come, so each read is one script call rather than a held element.
    private static string Read(IWebDriver driver, string room, string property) =>
        ((IJavaScriptExecutor)driver).ExecuteScript($"const a = document.querySelector(\"li[data-stream='{room}'] a.room\"); return a ? String(a.{property}) : '';") as string ?? "";

    private static string State(IWebDriver driver, string room) =>
        ((IJavaScriptExecutor)driver).ExecuteScript($"const a = document.querySelector(\"li[data-stream='{room}'] a.room\"); return a ? a.dataset.state : '';") as string ?? "";
}
