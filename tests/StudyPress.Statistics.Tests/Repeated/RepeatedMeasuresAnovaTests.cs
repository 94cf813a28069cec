using System.Globalization;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.Repeated;
using StudyPress.Statistics.Tests.Support;
using static StudyPress.Statistics.Tests.Repeated.RepeatedReference;

namespace StudyPress.Statistics.Tests.Repeated;

// The classical repeated-measures table against Reference/repeated-measures (SOURCE.md there):
// published values at their printed digits, the collection's exact recomputation (Python
// fractions / mpmath) at relative 1e-9, and this project's numpy recomputation
// (recompute-sphericity.out.json, numpy 1.24.2 + scipy 1.10.1) at relative 1e-9.
public class RepeatedMeasuresAnovaTests
{
    internal static readonly RepeatedMeasuresDesign OneWay = new("subject", ["condition"], []);
    internal static readonly RepeatedMeasuresDesign TwoWay = new("subject", ["A", "B"], []);
    internal static readonly RepeatedMeasuresDesign Model63 = new("subject", ["B"], ["A"], SubjectLabels.NumberedWithinGroups);

    internal static RepeatedMeasuresData OneWayData() => Load("rutherford-2001-oneway.csv", "subject", ["condition"], []);

    internal static RepeatedMeasuresData TwoWayData() => Load("rutherford-2001-twoway.csv", "subject", ["A", "B"], []);

    internal static RepeatedMeasuresData Model63Data() => Load("doncaster-davey-model-6-3.csv", "subject", ["B"], ["A"]);

    private static void AssertPublished(RepeatedRow row, System.Text.Json.JsonElement e, string what)
    {
        Assert.Equal(int.Parse(Text(e, "df"), CultureInfo.InvariantCulture), row.Df);
        Accuracy.AssertRoundsTo(row.SumOfSquares, Text(e, "ss"), what + " SS");
        Accuracy.AssertRoundsTo(row.MeanSquare.Value, Text(e, "ms"), what + " MS");
        if (e.TryGetProperty("f", out var f) && f.GetString() != "-")
        {
            Accuracy.AssertRoundsTo(V(row.F, what + " F"), f.GetString()!, what + " F");
        }
    }

    // Rutherford (2001) p. 72, published (via Eelbrain): one within factor, 8 subjects x 3.
    [Fact]
    public void RutherfordOneWay_PublishedTableAndExactRecomputation()
    {
        var r = RepeatedMeasuresAnova.Fit(OneWay, OneWayData());
        var root = Json("rutherford-2001-oneway.expected.json");
        var pub = root.GetProperty("published").GetProperty("repeated_measures_p72");
        AssertPublished(r.Row("condition"), pub.GetProperty("A"), "published A");
        AssertPublished(r.Row("subject"), pub.GetProperty("subject"), "published subject");
        AssertPublished(r.Row("condition:subject"), pub.GetProperty("A_x_subject"), "published A x subject");
        Accuracy.AssertRoundsTo(r.TotalSumOfSquares, Text(pub, "total", "ss"), "published total SS");
        Assert.Equal(23, r.TotalDf);

        var exact = root.GetProperty("exact_recomputation").GetProperty("repeated_measures");
        var a = r.Row("condition");
        AssertRelative(a.SumOfSquares, Number(exact, "A", "ss"), 1e-12, "exact SS");
        AssertRelative(V(a.F, "F"), Number(exact, "A", "f"), 1e-9, "exact F");
        AssertRelative(V(a.P, "p"), Number(exact, "A", "p"), 1e-9, "exact p");
        Assert.Equal(14, r.Row("condition:subject").Df);
        Assert.Equal("condition:subject", a.ErrorTerm);
        Assert.Empty(r.Dropped);
        Assert.Equal(8, r.Subjects.Count);

        // Exact hand computation: partial eta² = 112/(112 + 38); generalized eta² (all factors
        // manipulated) = 112/(112 + 14 + 38) = 112/164.
        AssertRelative(V(a.PartialEtaSquared, "partial"), 112.0 / 150, 1e-12, "partial eta²");
        AssertRelative(V(a.GeneralizedEtaSquared, "generalized"), 112.0 / 164, 1e-12, "generalized eta²");
    }

    // Sphericity of the one-way data: the collection's exact recomputation (Python fractions,
    // W = 239/1083) and this project's numpy recomputation (polynomial contrasts, numpy.cov).
    [Fact]
    public void RutherfordOneWay_SphericityMatchesBothRecomputations()
    {
        var r = RepeatedMeasuresAnova.Fit(OneWay, OneWayData());
        var s = r.SphericityOf("condition");
        var exact = Json("rutherford-2001-oneway.expected.json").GetProperty("exact_recomputation").GetProperty("sphericity");
        AssertSphericity(s, r.Row("condition"), exact, "exact recomputation");
        AssertRelative(V(s.W, "W"), 239.0 / 1083, 1e-12, "W fraction");
        var numpy = Json("recompute-sphericity.out.json").GetProperty("rutherford_oneway_condition");
        AssertNumpy(s, numpy, "numpy");
    }

    internal static void AssertSphericity(SphericityTest s, RepeatedRow row, System.Text.Json.JsonElement e, string what)
    {
        AssertRelative(V(s.W, "W"), Number(e, "mauchly_W"), 1e-9, what + " W");
        AssertRelative(V(s.ChiSquare, "chi2"), Number(e, "chi_square"), 1e-9, what + " chi2");
        Assert.Equal(int.Parse(Text(e, "chi_square_df"), CultureInfo.InvariantCulture), s.ChiSquareDf);
        AssertRelative(V(s.P, "p"), Number(e, "chi_square_p"), 1e-9, what + " Mauchly p");
        AssertRelative(V(s.EpsilonGreenhouseGeisser, "gg"), Number(e, "greenhouse_geisser_epsilon"), 1e-9, what + " GG");
        AssertRelative(V(s.EpsilonHuynhFeldt, "hf"), Number(e, "huynh_feldt_lecoutre_epsilon"), 1e-9, what + " HF (Lecoutre)");
        AssertRelative(s.EpsilonLowerBound, Number(e, "lower_bound_epsilon"), 1e-12, what + " lower bound");
        AssertRelative(V(row.GreenhouseGeisser!.P, "p_gg"), Number(e, "p_gg"), 1e-8, what + " p_gg");
        AssertRelative(V(row.HuynhFeldt!.P, "p_hf"), Number(e, "p_hf"), 1e-8, what + " p_hf");
        AssertRelative(V(row.LowerBound!.P, "p_lb"), Number(e, "p_lb"), 1e-8, what + " p_lb");
    }

    internal static void AssertNumpy(SphericityTest s, System.Text.Json.JsonElement e, string what)
    {
        Assert.Equal(int.Parse(Text(e, "nu"), CultureInfo.InvariantCulture), s.ErrorDf);
        AssertRelative(V(s.W, "W"), Number(e, "mauchly_w"), 1e-9, what + " W");
        AssertRelative(V(s.ChiSquare, "chi2"), Number(e, "chi_square"), 1e-9, what + " chi2");
        AssertRelative(V(s.P, "p"), Number(e, "chi_square_p"), 1e-9, what + " Mauchly p");
        AssertRelative(V(s.EpsilonGreenhouseGeisser, "gg"), Number(e, "epsilon_gg"), 1e-9, what + " GG");
        AssertRelative(V(s.EpsilonHuynhFeldt, "hf"), Number(e, "epsilon_hf_lecoutre"), 1e-9, what + " HF (Lecoutre)");
    }

    // Two within factors (Rutherford data as used by Eelbrain): third-party table values at their
    // printed digits (NOT marked published in the collection), the exact recomputation at 1e-9,
    // sphericity of B and A:B against the exact recomputation and numpy.
    [Fact]
    public void RutherfordTwoWay_ThirdPartyExactAndSphericity()
    {
        var r = RepeatedMeasuresAnova.Fit(TwoWay, TwoWayData());
        var root = Json("rutherford-2001-twoway.expected.json");
        var third = root.GetProperty("third_party_values");
        foreach (var (term, key) in new[] { ("A", "A"), ("B", "B"), ("A:B", "A x B") })
        {
            var row = r.Row(term);
            var e = third.GetProperty(key);
            AssertPublished(row, e, "third-party " + term);
            var error = r.Row(row.ErrorTerm!);
            Accuracy.AssertRoundsTo(error.MeanSquare.Value, Text(e, "ms_denom"), "third-party MS error " + term);
            Assert.Equal(int.Parse(Text(e, "df_denom"), CultureInfo.InvariantCulture), error.Df);
        }

        Accuracy.AssertRoundsTo(r.TotalSumOfSquares, Text(third, "total", "ss"), "third-party total SS");
        var exact = root.GetProperty("exact_recomputation");
        foreach (var (term, key) in new[] { ("A", "A"), ("B", "B"), ("A:B", "A:B"), ("subject", "subjects"), ("A:subject", "A_x_subjects"), ("B:subject", "B_x_subjects"), ("A:B:subject", "A:B_x_subjects") })
        {
            var row = r.Row(term);
            AssertRelative(row.SumOfSquares, Number(exact, key, "ss"), 1e-9, "exact SS " + term);
            Assert.Equal(int.Parse(Text(exact, key, "df"), CultureInfo.InvariantCulture), row.Df);
            if (row.Kind == RepeatedRowKind.Effect)
            {
                AssertRelative(V(row.F, "F"), Number(exact, key, "f"), 1e-9, "exact F " + term);
                AssertRelative(V(row.P, "p"), Number(exact, key, "p"), 1e-9, "exact p " + term);
                Assert.Equal(int.Parse(Text(exact, key, "error_term_df"), CultureInfo.InvariantCulture), r.Row(row.ErrorTerm!).Df);
            }
        }

        // The rows add up to the total (balanced): exact hand computation 1708.
        AssertRelative(r.Rows.Sum(x => x.SumOfSquares), 1708, 1e-12, "rows add up");
        var numpy = Json("recompute-sphericity.out.json");
        AssertSphericity(r.SphericityOf("B"), r.Row("B"), exact.GetProperty("sphericity_B"), "exact B");
        AssertSphericity(r.SphericityOf("A:B"), r.Row("A:B"), exact.GetProperty("sphericity_A:B"), "exact A:B");
        AssertNumpy(r.SphericityOf("B"), numpy.GetProperty("rutherford_twoway_B"), "numpy B");
        AssertNumpy(r.SphericityOf("A:B"), numpy.GetProperty("rutherford_twoway_AB"), "numpy A:B");

        // A has two levels: no Mauchly test, both epsilons 1, corrected p equal to the plain one.
        var sa = r.SphericityOf("A");
        Assert.False(sa.IsTested);
        Assert.False(sa.W.IsDefined);
        Assert.Contains("two levels", sa.W.Reason, StringComparison.Ordinal);
        Assert.Equal(1.0, V(sa.EpsilonGreenhouseGeisser, "gg"));
        Assert.Equal(1.0, V(sa.EpsilonHuynhFeldt, "hf"));
        Assert.Equal(V(r.Row("A").P, "p"), V(r.Row("A").GreenhouseGeisser!.P, "p_gg"));
    }

    // Doncaster and Davey (2007) model 6.3(i), published: A between (3 groups of 4 subjects
    // numbered 1-4 within each group), B within (2 levels). A is tested against S(A), B and B*A
    // against B*S(A). The collection's exact recomputation at 1e-9.
    [Fact]
    public void DoncasterDavey63_PublishedMixedDesign()
    {
        var r = RepeatedMeasuresAnova.Fit(Model63, Model63Data());
        var root = Json("doncaster-davey-model-6-3.expected.json");
        var pub = root.GetProperty("published").GetProperty("model_6_3_i");
        AssertPublished(r.Row("A"), pub.GetProperty("A"), "published A");
        AssertPublished(r.Row("subject(A)"), pub.GetProperty("S(A)"), "published S(A)");
        AssertPublished(r.Row("B"), pub.GetProperty("B"), "published B");
        AssertPublished(r.Row("A:B"), pub.GetProperty("B*A"), "published B*A");
        AssertPublished(r.Row("B:subject(A)"), pub.GetProperty("B*S(A)"), "published B*S(A)");
        Accuracy.AssertRoundsTo(V(r.Row("B").P, "p"), Text(pub, "B", "p"), "published B p");
        Accuracy.AssertRoundsTo(V(r.Row("A:B").P, "p"), Text(pub, "B*A", "p"), "published B*A p");
        Assert.True(V(r.Row("A").P, "p") < 0.001, "published A p < 0.001");
        Accuracy.AssertRoundsTo(r.TotalSumOfSquares, Text(pub, "total", "ss"), "published total SS");
        Assert.Equal(23, r.TotalDf);
        Assert.Equal("subject(A)", r.Row("A").ErrorTerm);
        Assert.Equal("B:subject(A)", r.Row("A:B").ErrorTerm);

        var exact = root.GetProperty("exact_recomputation");
        foreach (var (term, key) in new[] { ("A", "A"), ("B", "B"), ("A:B", "A:B"), ("subject(A)", "S(A)"), ("B:subject(A)", "B:S(A)") })
        {
            var row = r.Row(term);
            AssertRelative(row.SumOfSquares, Number(exact, key, "ss"), 1e-9, "exact SS " + term);
            AssertRelative(row.MeanSquare.Value, Number(exact, key, "ms"), 1e-9, "exact MS " + term);
            if (row.Kind == RepeatedRowKind.Effect)
            {
                AssertRelative(V(row.F, "F"), Number(exact, key, "f"), 1e-9, "exact F " + term);
                AssertRelative(V(row.P, "p"), Number(exact, key, "p"), 1e-9, "exact p " + term);
            }
        }

        // B has two levels: sphericity trivially holds.
        Assert.False(r.SphericityOf("B").IsTested);
        Assert.Equal(V(r.Row("A:B").P, "p"), V(r.Row("A:B").HuynhFeldt!.P, "p_hf"));

        // Generalized eta² of A (exact hand computation from the exact SS): 905.267.../(905.267... + 84.56... + 139.47...).
        var ga = Number(exact, "A", "ss") / (Number(exact, "A", "ss") + Number(exact, "S(A)", "ss") + Number(exact, "B:S(A)", "ss"));
        AssertRelative(V(r.Row("A").GeneralizedEtaSquared, "ges"), ga, 1e-9, "generalized eta² A");
    }

    // With subjects numbered 1-4 in each group but declared unique, subject 1 is under two groups:
    // an issue, not a silent merge.
    [Fact]
    public void NumberedSubjectsDeclaredUnique_IsContradictoryNesting()
    {
        var issue = RepeatedMeasuresAnova.Check(Model63 with { SubjectLabels = SubjectLabels.UniqueAcrossGroups }, Model63Data());
        Assert.NotNull(issue);
        Assert.Equal(DesignIssueKind.ContradictoryNesting, issue.Kind);
        Assert.Contains("subject 1 appears under A 1 and under A 2", issue.Message, StringComparison.Ordinal);
    }

    // Balanced designs: the contrast route equals the strata route of StrataAnova (subject random,
    // nested in the between factors), row by row (SS, df, F), to 1e-10.
    [Theory]
    [InlineData("twoway")]
    [InlineData("model63")]
    [InlineData("twobetween")]
    public void BalancedDesigns_EqualStrataAnova(string which)
    {
        var (design, data) = which switch
        {
            "twoway" => (TwoWay, TwoWayData()),
            "model63" => (Model63, Model63Data()),
            _ => TwoBetween(),
        };
        var r = RepeatedMeasuresAnova.Fit(design, data);
        var mixed = RepeatedMeasuresMixedModel.ToDesign(design, data, out var issue)!;
        Assert.Null(issue);
        var strata = StrataAnova.Fit(mixed.Factors, mixed.Data);
        Assert.Equal(strata.Rows.Count, r.Rows.Count);
        foreach (var s in strata.Rows)
        {
            var row = r.Row(s.Term);
            Assert.Equal(s.Df, row.Df);
            AssertRelative(row.SumOfSquares, s.SumOfSquares, 1e-10, "SS " + s.Term);
            if (row.Kind == RepeatedRowKind.Effect)
            {
                AssertRelative(V(row.F, "F"), V(s.F, "strata F"), 1e-10, "F " + s.Term);
                Assert.Equal(s.Stratum, row.ErrorTerm);
            }
        }
    }

    // Unequal group sizes: the two-way data read as a mixed design (A between: 6 and 8 subjects,
    // B within) against the numpy recomputation (cell-mean formulas, weighted = type 2; the
    // unweighted type 3 SS of B). Huynh–Feldt here is Lecoutre's, which differs from the
    // original Huynh–Feldt with two groups.
    [Fact]
    public void UnequalGroups_MatchNumpyRecomputation_LecoutreNotOriginal()
    {
        var data = MixedFromTwoWay(dropFirstTwo: true);
        var design = new RepeatedMeasuresDesign("subject", ["B"], ["A"]);
        var r = RepeatedMeasuresAnova.Fit(design, data);
        var e = Json("recompute-sphericity.out.json").GetProperty("twoway_as_mixed_unequal");
        Assert.Equal(14, r.Subjects.Count);
        Assert.Equal(2, r.Groups);
        foreach (var term in new[] { "A", "B", "A:B", "subject(A)", "B:subject(A)" })
        {
            var row = r.Row(term);
            AssertRelative(row.SumOfSquares, Number(e, term, "ss"), 1e-9, "numpy SS " + term);
            Assert.Equal(int.Parse(Text(e, term, "df"), CultureInfo.InvariantCulture), row.Df);
            if (row.Kind == RepeatedRowKind.Effect)
            {
                AssertRelative(V(row.F, "F"), Number(e, term, "f"), 1e-9, "numpy F " + term);
                AssertRelative(V(row.P, "p"), Number(e, term, "p"), 1e-9, "numpy p " + term);
            }
        }

        foreach (var term in new[] { "B", "A:B" })
        {
            AssertRelative(V(r.Row(term).GreenhouseGeisser!.P, "p_gg"), Number(e, term, "p_gg"), 1e-8, "numpy p_gg " + term);
            AssertRelative(V(r.Row(term).HuynhFeldt!.P, "p_hf"), Number(e, term, "p_hf"), 1e-8, "numpy p_hf " + term);
        }

        var s = r.SphericityOf("B");
        AssertNumpy(s, e.GetProperty("sphericity_B"), "numpy unequal groups");
        Assert.True(Math.Abs(V(s.EpsilonHuynhFeldt, "hf") - Number(e, "sphericity_B", "epsilon_hf_original_uncapped")) > 0.01);

        // Type 3: B's SS from the unweighted group means (numpy); A:B and the errors do not change.
        var r3 = RepeatedMeasuresAnova.Fit(design, data, SumOfSquaresType.Marginal);
        AssertRelative(r3.Row("B").SumOfSquares, Number(e, "B_type3_ss"), 1e-9, "numpy type 3 SS B");
        AssertRelative(r3.Row("A:B").SumOfSquares, r.Row("A:B").SumOfSquares, 1e-12, "A:B same in types 2 and 3");
        Assert.NotEqual(r3.Row("B").SumOfSquares, r.Row("B").SumOfSquares, 6);

        // The balanced version: numpy again (two groups of 8).
        var rb = RepeatedMeasuresAnova.Fit(design, MixedFromTwoWay(dropFirstTwo: false));
        var eb = Json("recompute-sphericity.out.json").GetProperty("twoway_as_mixed_balanced");
        AssertNumpy(rb.SphericityOf("B"), eb.GetProperty("sphericity_B"), "numpy balanced groups");
        AssertRelative(V(rb.Row("A:B").F, "F"), Number(eb, "A:B", "f"), 1e-9, "numpy balanced F A:B");
    }

    /// <summary>
    /// Two between factors: the two-way data with A between (subjects 9-16 under A2) and C
    /// between (odd subjects c1, even c2), B within: 4 groups of 4.
    /// </summary>
    internal static (RepeatedMeasuresDesign, RepeatedMeasuresData) TwoBetween()
    {
        var d = MixedFromTwoWay(dropFirstTwo: false);
        IReadOnlyList<string> c = [.. d.Subject.Select(x => int.Parse(x, CultureInfo.InvariantCulture) % 2 == 1 ? "c1" : "c2")];
        return (new RepeatedMeasuresDesign("subject", ["B"], ["A", "C"]), d with { Between = [d.Between[0], c] });
    }

    /// <summary>The two-way data with A read as a between factor: subject s under A2 becomes subject s + 8.</summary>
    internal static RepeatedMeasuresData MixedFromTwoWay(bool dropFirstTwo)
    {
        var d = TwoWayData();
        var keep = Enumerable.Range(0, d.Response.Length)
            .Where(i => !(dropFirstTwo && d.Within[0][i] == "A1" && (d.Subject[i] == "1" || d.Subject[i] == "2")))
            .ToArray();
        string Subject(int i) => d.Within[0][i] == "A2"
            ? (int.Parse(d.Subject[i], CultureInfo.InvariantCulture) + 8).ToString(CultureInfo.InvariantCulture)
            : d.Subject[i];
        return new RepeatedMeasuresData(
            [.. keep.Select(i => d.Response[i])],
            [.. keep.Select(Subject)],
            [[.. keep.Select(i => d.Within[1][i])]],
            [[.. keep.Select(i => d.Within[0][i])]]);
    }
}
