using System.Text.Json;
using System.Text.RegularExpressions;
using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Evaluation.Kinds;
using StudyPress.Syntax;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// An anova block's whole assumption review runs only when a block reads it (binding's
/// <c>of:</c>, or a methods block), and skipping it changes no output: the anova block's values and
/// its rule decisions (welch: auto reads Brown–Forsythe and Shapiro–Wilk) are the same either way.
/// </summary>
public sealed partial class AssumptionReviewNeededTests
{
    private const string Header = """
---
title: Review
data: data/d.csv
response: y
factors: [group]
---

```anova main
factors: [group]
```

""";

    // Invented values: unequal spreads, so the Brown–Forsythe rule has something to say.
    private const string Csv = "group,y\na,10.1\na,10.4\na,9.8\na,10.0\na,10.2\nb,12.0\nb,14.5\nb,9.9\nb,13.1\nb,11.2\nc,11.0\nc,11.1\nc,10.9\nc,11.3\nc,10.8\n";

    private static List<BoundBlock> Bind(string text)
    {
        var bag = new DiagnosticBag();
        var syntax = StudyParser.Parse("study.md", text, BlockKinds.Names, bag);
        Assert.True(syntax?.Header is not null, string.Join("\n", bag.Items));
        var header = HeaderBinder.Bind(syntax!.Header!, "study.md", bag);
        var blocks = BlockBinder.Bind(syntax, header, bag);
        Assert.False(bag.HasErrors, string.Join("\n", bag.Items));
        return blocks;
    }

    [Theory]
    [InlineData("", false)]
    [InlineData("```summary s\n```\n", false)]
    [InlineData("```anova other\nfactors: [group]\n```\n", false)]
    [InlineData("```assumptions checks\nof: main\n```\n", true)]
    [InlineData("```posthoc pairs\nof: main\n```\n", true)]
    [InlineData("```contrasts c\nof: main\ncompare:\n  a vs b: {\"a\": 1, \"b\": -1}\n```\n", true)]
    // A power block's 'of' is its own option and reads the fit only, never the review.
    [InlineData("```power pw\nof: main\nn: 5\n```\n", false)]
    [InlineData("```methods m\n```\n", true)]
    public void WholeReviewIsNeededOnlyWhenABlockReadsIt(string extra, bool needed)
    {
        var blocks = Bind(Header + extra);
        var main = blocks.Single(b => b.Id == "main");
        Assert.Equal(needed, AssumptionReview.Needed(main, blocks));
        Assert.True(AssumptionReview.Needed(main, null), "without the bound blocks the review is always run");
    }

    /// <summary>
    /// The same anova block without readers (its review skipped, only its rule's checks run) and
    /// with a block that reads its review (the whole review run): the same values under the anova
    /// block and the same rule decisions in the report, word for word.
    /// </summary>
    [Theory]
    [InlineData("")]
    [InlineData("welch: yes\n")]
    public void SkippingTheReviewChangesNoOutput(string welch)
    {
        var study = Header.Replace("factors: [group]\n```", "factors: [group]\n" + welch + "```", StringComparison.Ordinal);
        using var alone = new StudyRun().Study(study).File("data/d.csv", Csv);
        using var read = new StudyRun().Study(study + "```assumptions checks\nof: main\n```\n").File("data/d.csv", Csv);
        var a = alone.Compile();
        var b = read.Compile();
        Assert.True(a.Succeeded && b.Succeeded, string.Join("\n", a.Diagnostics.Concat(b.Diagnostics)));

        Assert.Equal(MainValues(b.ManifestJson!), MainValues(a.ManifestJson!));
        var decisions = Decision().Matches(a.Html!).Select(m => m.Value).ToList();
        Assert.Equal(Decision().Matches(b.Html!).Select(m => m.Value), decisions);
        Assert.NotEmpty(decisions);
    }

    private static List<string> MainValues(byte[] manifest)
    {
        using var doc = JsonDocument.Parse(manifest);
        return [.. doc.RootElement.GetProperty("values").EnumerateArray()
            .Where(v => v.GetProperty("block").GetString() == "main")
            .Select(v => v.GetRawText())];
    }

    [GeneratedRegex("<p class=\"decision\">[^<]*</p>")]
    private static partial Regex Decision();
}
