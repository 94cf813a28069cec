using System.Text.Json;
using Microsoft.Playwright;

namespace StudyPress.BrowserTests;

/// <summary>The example report in a real browser: offline, error-free, charts rendered, numbers traced.</summary>
[Collection("browser")]
public sealed class ExampleReportTests(BrowserFixture browser)
{
    private static readonly string[] Examples = ["spray-nozzles", "tomato-irrigation", "incubator-assay", "greenhouse-sqlite", "spreadsheet-trial"];

    public static TheoryData<string> ExampleNames() => [.. Examples];

    [BrowserTheory]
    [MemberData(nameof(ExampleNames))]
    public async Task Report_InBrowser_MakesNoRequestHasNoErrorsAndRendersEveryChartLabel(string example)
    {
        using var report = new BuiltReport(BuiltReport.Example(example));
        await using var b = await browser.LaunchAsync();
        var page = await b.NewPageAsync(new() { ViewportSize = new() { Width = 1200, Height = 900 } });
        var requests = new List<string>();
        var problems = new List<string>();
        page.Request += (_, r) => requests.Add(r.Url);
        page.Console += (_, m) =>
        {
            if (m.Type is "error" or "warning")
            {
                problems.Add(m.Type + ": " + m.Text);
            }
        };
        page.PageError += (_, e) => problems.Add("page error: " + e);
        await page.GotoAsync(report.Url, new() { WaitUntil = WaitUntilState.NetworkIdle });
        await page.WaitForFunctionAsync("() => document.fonts.status === 'loaded' && Array.from(document.fonts).some(f => f.family.includes('StudyPress Sans') && f.status === 'loaded')");

        Assert.Equal([report.Url], requests);
        Assert.Empty(problems);

        // Every text element of every chart is laid out with a visible size.
        var labels = await page.EvaluateAsync<JsonElement>(
            "() => Array.from(document.querySelectorAll('figure.chart svg text')).map(t => { const r = t.getBBox(); return { text: t.textContent, w: r.width, h: r.height }; })");
        var list = labels.EnumerateArray().ToList();
        var expected = report.Result.Html!.Split("<text", StringSplitOptions.None).Length - 1;
        Assert.Equal(expected, list.Count);
        Assert.True(list.Count > 20, "the example has charts with labels");
        Assert.All(list.Where(l => l.GetProperty("text").GetString()!.Trim().Length > 0), l => Assert.True(l.GetProperty("w").GetDouble() > 0, "label '" + l.GetProperty("text").GetString() + "' has no width"));
        Assert.True(await page.EvaluateAsync<bool>("() => Array.from(document.fonts).some(f => f.family.includes('StudyPress Sans') && f.status === 'loaded')"), "the chart font did not load");
    }

    [BrowserFact]
    public async Task Report_HoverAndClickOnANumber_ShowsItsTrace()
    {
        using var report = new BuiltReport(BuiltReport.Example("spray-nozzles"));
        await using var b = await browser.LaunchAsync();
        var page = await b.NewPageAsync(new() { ViewportSize = new() { Width = 1200, Height = 900 } });
        await page.GotoAsync(report.Url);
        using var manifest = JsonDocument.Parse(report.Result.ManifestJson!);
        var sha = manifest.RootElement.GetProperty("inputs")[0].GetProperty("sha256").GetString()!;

        // The F of the one-way ANOVA in the block 'main'.
        var f = manifest.RootElement.GetProperty("values").EnumerateArray()
            .First(v => v.GetProperty("block").GetString() == "main" && v.GetProperty("stat").GetString() == "f" && v.GetProperty("test").GetString() == "anova");
        var id = f.GetProperty("id").GetString()!;
        var number = page.Locator($"#block-main [data-v=\"{id}\"]").First;
        await number.HoverAsync();
        var trace = page.Locator("#trace");
        await Assertions.Expect(trace).ToBeVisibleAsync();
        var text = await trace.InnerTextAsync();
        Assert.Contains("main", text, StringComparison.Ordinal);
        Assert.Contains("anova", text, StringComparison.Ordinal);
        Assert.Contains("f", text, StringComparison.Ordinal);
        Assert.Contains(sha, text, StringComparison.Ordinal);
        Assert.Contains(f.GetProperty("value").GetDouble().ToString("R", System.Globalization.CultureInfo.InvariantCulture), text, StringComparison.Ordinal);

        // Clicking pins the trace; moving away keeps it; Escape hides it.
        await number.ClickAsync();
        await page.Mouse.MoveAsync(5, 5);
        await Assertions.Expect(trace).ToBeVisibleAsync();
        Directory.CreateDirectory(Screenshots);
        await page.ScreenshotAsync(new() { Path = Path.Combine(Screenshots, "spray-nozzles-trace.png"), FullPage = false });
        await page.Keyboard.PressAsync("Escape");
        await Assertions.Expect(trace).ToBeHiddenAsync();

        // Keyboard users reach the trace by focusing the number (the click left it focused).
        await page.EvaluateAsync("() => document.activeElement.blur()");
        await number.FocusAsync();
        await Assertions.Expect(trace).ToBeVisibleAsync();
        await page.ScreenshotAsync(new() { Path = Path.Combine(Screenshots, "spray-nozzles-full.png"), FullPage = true });

        // The data section's row counts are traced to their input entry.
        await page.Keyboard.PressAsync("Escape");
        await page.Locator("[data-input][data-field=\"rowsUsed\"]").First.HoverAsync();
        await Assertions.Expect(trace).ToBeVisibleAsync();
        var inputTrace = await trace.InnerTextAsync();
        Assert.Contains("rows used", inputTrace, StringComparison.Ordinal);
        Assert.Contains(sha, inputTrace, StringComparison.Ordinal);
    }

    [BrowserFact]
    public async Task Report_WithoutAnyHostFont_StillRendersChartText()
    {
        // An empty fontconfig configuration: the browser finds no system font at all, so text
        // can only render through the font embedded in the report.
        using var report = new BuiltReport(BuiltReport.Example("spray-nozzles"));
        var conf = Path.Combine(report.Folder, "fonts.conf");
        File.WriteAllText(conf, "<?xml version=\"1.0\"?>\n<!DOCTYPE fontconfig SYSTEM \"fonts.dtd\">\n<fontconfig></fontconfig>\n");
        await using var b = await browser.LaunchAsync(new Dictionary<string, string> { ["FONTCONFIG_FILE"] = conf });
        var page = await b.NewPageAsync();
        await page.GotoAsync(report.Url);
        await page.WaitForFunctionAsync("() => document.fonts.status === 'loaded' && Array.from(document.fonts).some(f => f.family.includes('StudyPress Sans') && f.status === 'loaded')");
        var widths = await page.EvaluateAsync<double[]>("() => Array.from(document.querySelectorAll('figure.chart svg text')).filter(t => t.textContent.trim().length > 0).map(t => t.getBBox().width)");
        Assert.NotEmpty(widths);
        Assert.All(widths, w => Assert.True(w > 0));
        Assert.True(await page.EvaluateAsync<bool>("() => Array.from(document.fonts).some(f => f.family.includes('StudyPress Sans') && f.status === 'loaded')"), "the chart font did not load");
        Directory.CreateDirectory(Screenshots);
        await page.Locator("figure.chart").First.ScreenshotAsync(new() { Path = Path.Combine(Screenshots, "no-host-fonts-chart.png") });
    }

    /// <summary>Screenshots land beside the test assembly, in screenshots/.</summary>
    public static string Screenshots => Path.Combine(AppContext.BaseDirectory, "screenshots");
}
