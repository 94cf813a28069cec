using System.Globalization;
using System.Text;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Captions of residual figures drawn from a chosen subset of a large model's points say exactly
/// which subset: the residuals-against-fitted figure takes 2,000 points evenly spaced in data order
/// (the point at ⌊k·n/2000⌋ for k = 0…1999), which is not "every k-th" one.
/// </summary>
public sealed class ThinnedFigureCaptionTests
{
    [Theory]
    [InlineData(6207, "With 6,207 observations, 2,000 of them, evenly spaced in data order, are drawn (about one in 3.1).")]
    [InlineData(24000, "With 24,000 observations, 2,000 of them, evenly spaced in data order, are drawn (about one in 12).")]
    public void ResidualsAgainstFitted_LargeModel_CaptionStatesTheEvenChoice(int rows, string expected)
    {
        var csv = new StringBuilder("run,g,y\n");
        for (var i = 1; i <= rows; i++)
        {
            var g = i % 3;
            csv.Append(CultureInfo.InvariantCulture, $"{i},{(char)('a' + g)},{10 + (2 * g) + ((i * 7919 % 1000) / 250.0):0.###}\n");
        }

        using var run = new StudyRun().File("data.csv", csv.ToString())
            .Study("---\ntitle: Thinned\ndata: data.csv\nresponse: y\nfactors: [g]\n---\n\n```anova main\n```\n\n```assumptions checks\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains(expected, result.Html!, StringComparison.Ordinal);
        Assert.DoesNotContain("th one in data order", result.Html!, StringComparison.Ordinal);
    }
}
