using System.Globalization;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.Repeated;
using static StudyPress.Statistics.Tests.Repeated.RepeatedReference;

namespace StudyPress.Statistics.Tests.Repeated;

// Which subjects the classical route keeps, which it drops and why; problems returned as values.
public class RepeatedSubjectsTests
{
    // Property over every measurement of the reference data: removing one measurement (or making it
    // NaN) drops exactly that subject, names the missing cell, and leaves the table of the other
    // subjects; the mixed-model route keeps the subject.
    [Theory]
    [InlineData("oneway")]
    [InlineData("twoway")]
    public void RemovingOneMeasurement_DropsExactlyThatSubject(string which)
    {
        var (design, data) = which == "oneway"
            ? (RepeatedMeasuresAnovaTests.OneWay, RepeatedMeasuresAnovaTests.OneWayData())
            : (RepeatedMeasuresAnovaTests.TwoWay, RepeatedMeasuresAnovaTests.TwoWayData());
        for (var i = 0; i < data.Response.Length; i++)
        {
            var subject = data.Subject[i];
            var removed = Where(data, j => j != i);
            var fit = RepeatedMeasuresAnova.Fit(design, removed);
            var dropped = Assert.Single(fit.Dropped);
            Assert.Equal(subject, dropped.Subject);
            var cell = string.Join(", ", design.Within.Select((f, k) => f + " " + data.Within[k][i]));
            Assert.Equal([cell], dropped.MissingCells);
            Assert.Equal(1, dropped.MissingCellCount);
            Assert.Contains("no measurement for " + cell, dropped.Reason, StringComparison.Ordinal);
            Assert.Equal(7, fit.Subjects.Count);
            Assert.DoesNotContain(subject, fit.Subjects);

            var without = RepeatedMeasuresAnova.Fit(design, Where(data, j => data.Subject[j] != subject));
            Assert.Equal(without.Rows.Select(r => r.SumOfSquares), fit.Rows.Select(r => r.SumOfSquares));

            var nan = data with { Response = [.. data.Response.Select((v, j) => j == i ? double.NaN : v)] };
            var fitNan = RepeatedMeasuresAnova.Fit(design, nan);
            Assert.Equal(subject, Assert.Single(fitNan.Dropped).Subject);
            Assert.Equal(1, fitNan.Dropped[0].NotFinite);

            var mixed = RepeatedMeasuresMixedModel.ToDesign(design, removed, out var issue)!;
            Assert.Null(issue);
            Assert.Equal(8, mixed.Subjects);
            Assert.Equal([subject], mixed.IncompleteSubjects);
            Assert.Equal(data.Response.Length - 1, mixed.Measurements);
            Assert.Equal(8, mixed.Data.Labels[^1].Distinct().Count());
        }
    }

    // Two measurements in one cell are averaged (the table is that of the means) and counted.
    [Fact]
    public void ReplicatedCell_IsAveraged()
    {
        var data = RepeatedMeasuresAnovaTests.OneWayData();
        var i = 0; // subject 1, condition a, y = 7
        var more = new RepeatedMeasuresData(
            [.. data.Response.Select((v, j) => j == i ? 6.0 : v), 8.0],
            [.. data.Subject, data.Subject[i]],
            [[.. data.Within[0], data.Within[0][i]]],
            []);
        var fit = RepeatedMeasuresAnova.Fit(RepeatedMeasuresAnovaTests.OneWay, more);
        Assert.Equal(1, fit.ReplicatedCells);
        var plain = RepeatedMeasuresAnova.Fit(RepeatedMeasuresAnovaTests.OneWay, data);
        foreach (var (a, b) in fit.Rows.Zip(plain.Rows))
        {
            AssertRelative(a.SumOfSquares, b.SumOfSquares, 1e-13, "SS " + a.Term);
        }
    }

    [Fact]
    public void Problems_AreReturnedAsIssues()
    {
        var data = RepeatedMeasuresAnovaTests.OneWayData();

        // A within factor with one level.
        var single = data with { Within = [[.. data.Within[0].Select(_ => "a")]] };
        Assert.Equal(DesignIssueKind.SingleLevel, RepeatedMeasuresAnova.Check(RepeatedMeasuresAnovaTests.OneWay, single)!.Kind);

        // Every subject incomplete: each misses a different condition.
        var holes = Where(data, j => int.Parse(data.Subject[j], CultureInfo.InvariantCulture) % 3 != "abc".IndexOf(data.Within[0][j][0], StringComparison.Ordinal));
        var none = RepeatedMeasuresAnova.Check(RepeatedMeasuresAnovaTests.OneWay, holes)!;
        Assert.Equal(DesignIssueKind.TooFewObservations, none.Kind);
        Assert.Contains("mixed model", none.Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentException>(() => RepeatedMeasuresAnova.Fit(RepeatedMeasuresAnovaTests.OneWay, holes));
        Assert.Null(RepeatedMeasuresMixedModel.Check(RepeatedMeasuresAnovaTests.OneWay, holes));

        // One complete subject: no error df.
        var one = Where(data, j => data.Subject[j] == "1");
        Assert.Equal(DesignIssueKind.TooFewObservations, RepeatedMeasuresAnova.Check(RepeatedMeasuresAnovaTests.OneWay, one)!.Kind);

        // A name used twice.
        var twice = new RepeatedMeasuresDesign("condition", ["condition"], []);
        Assert.Equal(DesignIssueKind.Declaration, RepeatedMeasuresAnova.Check(twice, data)!.Kind);

        // Two between factors with a combination that has no complete subject.
        string[] g1 = ["x", "x", "y", "y", "x", "x", "y", "y"];
        string[] g2 = ["p", "q", "p", "p", "p", "q", "p", "p"];
        var crossed = data with
        {
            Between =
            [
                [.. data.Subject.Select(s => g1[int.Parse(s, CultureInfo.InvariantCulture) - 1])],
                [.. data.Subject.Select(s => g2[int.Parse(s, CultureInfo.InvariantCulture) - 1])],
            ],
        };
        var design = new RepeatedMeasuresDesign("subject", ["condition"], ["G1", "G2"]);
        var missing = RepeatedMeasuresAnova.Check(design, crossed)!;
        Assert.Equal(DesignIssueKind.MissingCombination, missing.Kind);
        Assert.Contains("G1 y, G2 q", missing.Message, StringComparison.Ordinal);
    }

    // More within-subject cells than the classical route handles (16 x 17 = 272 > 256): an issue,
    // before any per-subject arrays are built.
    [Fact]
    public void TooManyWithinCells_IsDeclarationIssue()
    {
        var n = 2 * 16 * 17;
        var idx = Enumerable.Range(0, n).ToArray();
        var data = new RepeatedMeasuresData(
            [.. idx.Select(i => (double)(i % 7))],
            [.. idx.Select(i => (i / 272).ToString(CultureInfo.InvariantCulture))],
            [[.. idx.Select(i => ((i / 17) % 16).ToString(CultureInfo.InvariantCulture))], [.. idx.Select(i => (i % 17).ToString(CultureInfo.InvariantCulture))]],
            []);
        var issue = RepeatedMeasuresAnova.Check(new RepeatedMeasuresDesign("subject", ["P", "Q"], []), data)!;
        Assert.Equal(DesignIssueKind.Declaration, issue.Kind);
        Assert.Contains("256", issue.Message, StringComparison.Ordinal);
    }

    // Subjects numbered within groups: a dropped subject is named with its group, and only that
    // subject (not subject 1 of the other groups) is dropped.
    [Fact]
    public void NumberedWithinGroups_DropsTheSubjectOfThatGroup()
    {
        var data = RepeatedMeasuresAnovaTests.Model63Data();
        var i = Enumerable.Range(0, data.Response.Length).First(j => data.Subject[j] == "1" && data.Between[0][j] == "2");
        var fit = RepeatedMeasuresAnova.Fit(RepeatedMeasuresAnovaTests.Model63, Where(data, j => j != i));
        var d = Assert.Single(fit.Dropped);
        Assert.Equal("1 (A 2)", d.Subject);
        Assert.Equal(["2"], d.BetweenLevels);
        Assert.Equal(11, fit.Subjects.Count);
        Assert.Contains("1 (A 1)", fit.Subjects);
    }

    // A response without variation: no F, no sphericity, no crash; the rule has nothing to correct.
    [Fact]
    public void ConstantResponse_GivesUndefinedValuesWithReasons()
    {
        double[][] y = [[5, 5, 5], [5, 5, 5], [5, 5, 5]];
        var fit = RepeatedMeasuresAnova.Fit(SphericityTests.Design(false), SphericityTests.FromMatrix(y));
        var row = fit.Row("t");
        Assert.False(row.F.IsDefined);
        Assert.Contains("error mean square is zero", row.F.Reason, StringComparison.Ordinal);
        Assert.False(row.PartialEtaSquared.IsDefined);
        var s = fit.SphericityOf("t");
        Assert.False(s.EpsilonGreenhouseGeisser.IsDefined);
        Assert.False(row.GreenhouseGeisser!.P.IsDefined);
        Assert.Equal(SphericityBasis.NotAssessable, SphericityDecision.For(s, 0.05).Basis);
    }

    // The completeness report without a fit: the kept and the dropped subjects.
    [Fact]
    public void Completeness_ListsKeptAndDropped()
    {
        var data = RepeatedMeasuresAnovaTests.OneWayData();
        var fewer = Where(data, j => !(data.Subject[j] == "5" && data.Within[0][j] != "a"));
        var report = RepeatedMeasuresAnova.Completeness(RepeatedMeasuresAnovaTests.OneWay, fewer, out var issue)!.Value;
        Assert.Null(issue);
        Assert.Equal(7, report.Complete.Count);
        var d = Assert.Single(report.Dropped);
        Assert.Equal("5", d.Subject);
        Assert.Equal(1, d.Measurements);
        Assert.Equal(["condition b", "condition c"], d.MissingCells);
    }
}
