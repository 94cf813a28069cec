using System.Text.Json;
using Microsoft.Playwright;

namespace StudyPress.BrowserTests;

/// <summary>
/// The report on paper and on screen: Chromium prints the spray-nozzle example to PDF, and the
/// pages are counted and measured (PdfPages); chart text is measured as the browser draws it.
/// </summary>
[Collection("browser")]
public sealed class PrintLayoutTests(BrowserFixture browser)
{
    [BrowserFact]
    public async Task SprayNozzles_Printed_FitsOnFewerPagesWithNoneNearlyEmpty()
    {
        using var report = new BuiltReport(BuiltReport.Example("spray-nozzles"));
        await using var b = await browser.LaunchAsync();
        var page = await b.NewPageAsync();
        await page.GotoAsync(report.Url, new() { WaitUntil = WaitUntilState.NetworkIdle });
        await page.WaitForFunctionAsync("() => document.fonts.status === 'loaded'");
        var pdf = await page.PdfAsync(new() { Format = "Letter" });
        var pages = PdfPages.Read(pdf);
        var fills = string.Join(", ", pages.Select(p => p.Fill.ToString("F2", System.Globalization.CultureInfo.InvariantCulture)));

        // The report printed on 11 pages before the print stylesheet was reworked; 8 now.
        Assert.True(pages.Count <= 9, $"{pages.Count} pages (fills {fills})");
        Assert.True(pages.Count >= 2, $"{pages.Count} pages: the PDF was not read");
        // No page but the last ends its text in the top third of the page (such as a page holding
        // only the closing note, or one left a third full because a figure moved on).
        for (var i = 0; i < pages.Count - 1; i++)
        {
            Assert.True(pages[i].Fill >= 1.0 / 3, $"page {i + 1} of {pages.Count} is less than a third full (fills {fills})");
        }
    }

    [BrowserFact]
    public void PdfPages_ReadsTheLowestTextOfEachPage()
    {
        // A hand-written two-page PDF (exact hand computation): page 1 has text at y = 700 and 100
        // from the bottom of a 792-point page, page 2 at y = 500 under a 0.5 scale (250).
        static string Content(string body) => "<< /Length " + body.Length.ToString(System.Globalization.CultureInfo.InvariantCulture) + " >>\nstream\n" + body + "\nendstream";
        var pdf = "%PDF-1.4\n"
            + "1 0 obj\n<</Type /Page /MediaBox [0 0 612 792] /Contents 3 0 R>>\nendobj\n"
            + "2 0 obj\n<</Type /Page /MediaBox [0 0 612 792] /Contents [4 0 R]>>\nendobj\n"
            + "3 0 obj\n" + Content("BT 1 0 0 1 72 700 Tm (a) Tj ET BT 1 0 0 1 72 100 Tm (b) Tj ET") + "\nendobj\n"
            + "4 0 obj\n" + Content("q 0.5 0 0 0.5 0 0 cm BT 1 0 0 1 10 500 Tm (c) Tj ET Q") + "\nendobj\n%%EOF\n";
        var pages = PdfPages.Read(System.Text.Encoding.Latin1.GetBytes(pdf));
        Assert.Equal(2, pages.Count);
        Assert.Equal(692, pages[0].LowestText, 6);
        Assert.Equal(542, pages[1].LowestText, 6);
    }

    [BrowserTheory]
    [InlineData("screen")]
    [InlineData("print")]
    public async Task ChartText_AsDrawn_IsAtLeastElevenPixels(string media)
    {
        using var report = new BuiltReport(BuiltReport.Example("spray-nozzles"));
        await using var b = await browser.LaunchAsync();
        // Print: a US-letter page's width less the stylesheet's margins, at 96 CSS px per inch.
        var page = await b.NewPageAsync(new() { ViewportSize = new() { Width = media == "print" ? 702 : 1200, Height = 900 } });
        await page.EmulateMediaAsync(new() { Media = media == "print" ? Media.Print : Media.Screen });
        await page.GotoAsync(report.Url, new() { WaitUntil = WaitUntilState.NetworkIdle });
        var sizes = await page.EvaluateAsync<JsonElement>(
            "() => Array.from(document.querySelectorAll('figure.chart svg')).flatMap(svg => { const scale = svg.getBoundingClientRect().width / svg.viewBox.baseVal.width; return Array.from(svg.querySelectorAll('text')).map(t => ({ text: t.textContent, px: parseFloat(t.getAttribute('font-size')) * scale })); })");
        var list = sizes.EnumerateArray().ToList();
        Assert.True(list.Count > 20);
        Assert.All(list, s => Assert.True(s.GetProperty("px").GetDouble() >= 11, $"{media}: '{s.GetProperty("text").GetString()}' drawn at {s.GetProperty("px").GetDouble():F1} px"));
    }
}
