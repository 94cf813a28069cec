using StudyPress.Statistics.Designs;

namespace StudyPress.Statistics.Repeated;

/// <summary>
/// A repeated-measures design stated as a <see cref="MixedModel"/> design: the factors (between
/// factors, then within factors, as treatments; the subject a random factor nested in the between
/// factors) and the data with every finite measurement, incomplete subjects included.
/// </summary>
/// <param name="Subjects">Subjects with at least one measurement.</param>
/// <param name="IncompleteSubjects">Those among them that the classical analysis drops (labels as in <see cref="DroppedSubject.Subject"/>).</param>
/// <param name="Measurements">Finite measurements used.</param>
public sealed record RepeatedMixedDesign(
    IReadOnlyList<DesignFactor> Factors,
    DesignData Data,
    int Subjects,
    IReadOnlyList<string> IncompleteSubjects,
    int Measurements);

/// <summary>The REML fit of a repeated-measures design and the design it was fitted on.</summary>
public sealed record RepeatedMixedResult(RepeatedMixedDesign Design, RemlResult Reml);

/// <summary>
/// One effect tested by both routes. <paramref name="Agree"/> is true when F, the error df and p
/// agree to the tolerance asked for, relative to the larger value or absolute below 1 (an F of
/// rounding size, 1e-31 against 4e-31, agrees); when either route leaves a value undefined they
/// agree only if both do.
/// </summary>
public sealed record RouteComparison(
    string Term,
    int Df,
    Quantity ClassicalF,
    int ClassicalDfError,
    Quantity ClassicalP,
    Quantity MixedF,
    Quantity MixedDfError,
    Quantity MixedP,
    bool Agree);

/// <summary>
/// The mixed-model route for repeated measures with missing measurements: the same long data as
/// <see cref="RepeatedMeasuresAnova"/>, analysed by <see cref="MixedModel.FitReml"/> (REML,
/// Satterthwaite df), which keeps incomplete subjects.
/// <para>
/// The model is the one <see cref="StrataAnova"/> derives from the roles, not re-derived here:
/// between and within factors are fixed treatments (all interactions, sum-to-zero coding); the
/// subject is a random factor nested in the between factors, crossed with the within factors, so
/// the random terms are subjects(groups) and every within term × subjects(groups). The finest of
/// these identifies single measurements when each subject has one measurement per cell and is then
/// the residual; with replicated cells it is a random term of its own beside the residual (the
/// replication estimates both). On complete balanced data with every variance estimate inside the
/// parameter space the F tests and Satterthwaite df equal the classical ones (tested); when an
/// estimate falls on the boundary (a stratum's mean square below its error's, as happens by chance)
/// REML pools it and the two routes differ: report both.
/// </para>
/// <para>
/// Subject labels follow <see cref="RepeatedMeasuresDesign.SubjectLabels"/>: with unique labels a
/// subject under two groups is reported as an issue (as for the classical route); with labels
/// numbered within groups the nesting makes them distinct. Non-finite responses are left out.
/// </para>
/// </summary>
public static class RepeatedMeasuresMixedModel
{
    /// <summary>The mixed-model design, or null with <paramref name="issue"/> set.</summary>
    public static RepeatedMixedDesign? ToDesign(RepeatedMeasuresDesign design, RepeatedMeasuresData data, out DesignIssue? issue)
    {
        issue = RepeatedLayoutBuilder.Build(design, data, out var layout);
        if (issue is not null)
        {
            return null;
        }

        var factors = new List<DesignFactor>();
        factors.AddRange(design.Between.Select(b => DesignFactor.Treatment(b)));
        factors.AddRange(design.Within.Select(w => DesignFactor.Treatment(w)));
        factors.Add(DesignFactor.Random(design.Subject, [.. design.Between]));

        var keep = Enumerable.Range(0, data.Response.Length).Where(i => double.IsFinite(data.Response[i])).ToArray();
        var labels = new List<IReadOnlyList<string>>();
        labels.AddRange(data.Between.Select(col => (IReadOnlyList<string>)[.. keep.Select(i => col[i])]));
        labels.AddRange(data.Within.Select(col => (IReadOnlyList<string>)[.. keep.Select(i => col[i])]));
        labels.Add([.. keep.Select(i => data.Subject[i])]);
        var subjects = layout!.Subjects.Count + layout.Dropped.Count(d => d.Measurements > 0);
        return new RepeatedMixedDesign(
            factors,
            new DesignData([.. keep.Select(i => data.Response[i])], labels),
            subjects,
            [.. layout.Dropped.Where(d => d.Measurements > 0).Select(d => d.Subject)],
            keep.Length);
    }

    /// <summary>The first problem with the mixed-model route, or null.</summary>
    public static DesignIssue? Check(RepeatedMeasuresDesign design, RepeatedMeasuresData data)
    {
        var d = ToDesign(design, data, out var issue);
        return issue ?? MixedModel.Check(d!.Factors, d.Data);
    }

    /// <summary>Fits the model by REML; throws <see cref="ArgumentException"/> when <see cref="Check"/> finds a problem.</summary>
    public static RepeatedMixedResult Fit(RepeatedMeasuresDesign design, RepeatedMeasuresData data)
    {
        var d = ToDesign(design, data, out var issue);
        if (issue is not null)
        {
            throw new ArgumentException(issue.Message, nameof(data));
        }

        return new RepeatedMixedResult(d!, MixedModel.FitReml(d!.Factors, d.Data));
    }

    /// <summary>
    /// The effects of the classical table beside the mixed model's tests of the same terms (same
    /// names), so that a report can show both routes when they differ: they do when subjects were
    /// dropped, when group sizes are unequal and the classical SS type is not 3 (the mixed model
    /// tests type 3 hypotheses), and when a REML variance estimate is on the boundary.
    /// </summary>
    public static IReadOnlyList<RouteComparison> Compare(RepeatedMeasuresResult classical, RemlResult mixed, double relativeTolerance = 1e-6)
    {
        ArgumentNullException.ThrowIfNull(classical);
        ArgumentNullException.ThrowIfNull(mixed);
        static bool Close(Quantity a, Quantity b, double tol) =>
            a.IsDefined && b.IsDefined ? Math.Abs(a.Value - b.Value) <= tol * Math.Max(1, Math.Max(Math.Abs(a.Value), Math.Abs(b.Value))) : a.IsDefined == b.IsDefined;

        var list = new List<RouteComparison>();
        foreach (var row in classical.Rows.Where(r => r.Kind == RepeatedRowKind.Effect))
        {
            var t = mixed.Tests.FirstOrDefault(x => string.Equals(x.Term, row.Term, StringComparison.Ordinal))
                    ?? throw new ArgumentException("the mixed model has no test of " + row.Term, nameof(mixed));
            var dfError = classical.Row(row.ErrorTerm!).Df;
            var agree = t.NumeratorDf == row.Df
                        && Close(row.F, t.F, relativeTolerance)
                        && Close(Quantity.Of(dfError), t.DfDenominator, relativeTolerance)
                        && Close(row.P, t.P, relativeTolerance);
            list.Add(new RouteComparison(row.Term, row.Df, row.F, dfError, row.P, t.F, t.DfDenominator, t.P, agree));
        }

        return list;
    }
}
