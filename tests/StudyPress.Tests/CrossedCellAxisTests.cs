using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Through the pipeline: the box plot of a summary by two crossed factors
/// name each box by the second factor's level and each run of boxes by the first factor's level,
/// so cells whose long names share their start stay apart on the axis (invented labels and values;
/// a layout check).
/// </summary>
public sealed class CrossedCellAxisTests
{
    [Fact]
    public void SummaryByTwoFactors_BoxPlotDrawsTwoTiers()
    {
        var csv = new System.Text.StringBuilder("run,line,setting,y\n");
        var lines = new[] { "Extruder line A (inner barrel)", "Extruder line B (outer barrel)" };
        var settings = new[] { "Melt 210", "Melt 220", "Melt 230" };
        var run = 1;
        for (var rep = 0; rep < 3; rep++)
        {
            foreach (var l in lines)
            {
                foreach (var s in settings)
                {
                    csv.Append(System.Globalization.CultureInfo.InvariantCulture, $"{run},\"{l}\",{s},{30 + rep + (run % 5) * 0.3}\n");
                    run++;
                }
            }
        }

        using var study = new StudyRun().File("data.csv", csv.ToString())
            .Study("---\ntitle: Tiers\ndata: data.csv\nresponse: y\nfactors: [line, setting]\norder: run\n---\n\n```summary cells\nby: [line, setting]\n```\n");
        var result = study.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var html = result.Html!;
        foreach (var l in lines)
        {
            Assert.Contains("class=\"category-group-label\"", html, StringComparison.Ordinal);
            Assert.Contains(l, html, StringComparison.Ordinal);
        }

        // The box plot: one outer label per line and one inner label per cell.
        Assert.Equal(lines.Length, Count(html, "class=\"category-group-label\""));
        Assert.Equal(lines.Length * settings.Length, Count(html, "class=\"category-label\""));
    }

    private static int Count(string text, string part)
    {
        int n = 0;
        for (int i = text.IndexOf(part, StringComparison.Ordinal); i >= 0; i = text.IndexOf(part, i + part.Length, StringComparison.Ordinal))
        {
            n++;
        }

        return n;
    }
}
