using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Statistics;
using StudyPress.Syntax;

namespace StudyPress.Evaluation.Kinds;

/// <summary>One anova block described, with the covered blocks that work on it.</summary>
public sealed class MethodsSection
{
    public required AnovaOutcome Anova { get; init; }

    /// <summary>Whether the anova block itself is covered (not only blocks that work on it).</summary>
    public required bool Covered { get; init; }

    public AssumptionsOutcome? Checks { get; set; }

    public List<PostHocOutcome> PostHocs { get; } = [];

    public List<PowerOutcome> Powers { get; } = [];

    /// <summary>Cell label → traced size, in cell order.</summary>
    public List<(string Label, ResultValue N)> Cells { get; } = [];

    public ResultValue? Total { get; set; }

    public ResultValue? Dropped { get; set; }

    /// <summary>Review values by test then statistic: from an assumptions block of the anova, else recorded here.</summary>
    public Dictionary<string, IReadOnlyDictionary<string, ResultValue>> Review { get; } = new(StringComparer.Ordinal);
}

public sealed class MethodsOutcome(BoundBlock block) : BlockOutcome(block)
{
    public List<MethodsSection> Sections { get; } = [];

    public List<SummaryOutcome> Summaries { get; } = [];

    public List<RanksOutcome> Ranks { get; } = [];

    /// <summary>Power blocks not tied to an anova block.</summary>
    public List<PowerOutcome> Powers { get; } = [];

    /// <summary>Covered blocks of the other kinds (their renderers contribute their own sentences), in line order.</summary>
    public List<BlockOutcome> Others { get; } = [];

    /// <summary>Datasets the covered blocks read, with traced row counts.</summary>
    public List<(MethodsLoadedDatasetView Dataset, ResultValue Rows, ResultValue RowsUsed)> Inputs { get; } = [];

    public double Alpha { get; init; }
}

/// <summary>What the text says about an input file; <paramref name="Aggregated"/>: its rows are the database's cells (<c>aggregate: true</c>).</summary>
public sealed record MethodsLoadedDatasetView(string Name, string Path, string Sha256, bool Aggregated = false);

/// <summary>Evaluates <c>methods</c> blocks into values (no HTML, no report text).</summary>
public sealed class MethodsEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new MethodsEvaluator());

    public override string Kind => "methods";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = block.OptionsOf<MethodsKind.Options>();
        var outcome = new MethodsOutcome(block) { Alpha = context.Header.Alpha };
        var describable = context.Outcomes.Values
            .Where(o => o.Block.Kind is not MethodsKind and not FigureKind)
            .OrderBy(o => o.Block.Location.Line)
            .ToList();
        List<BlockOutcome> covered;
        if (options.Of is null)
        {
            covered = describable;
        }
        else
        {
            covered = [];
            foreach (var item in options.Of)
            {
                if (context.Outcomes.GetValueOrDefault(item.Value) is not { } target)
                {
                    diagnostics.UnknownMethodsOf(item.Location, item.Value, DiagnosticBag.Nearest(item.Value, describable.Select(d => d.Block.Id)));
                }
                else if (target.Block.Kind is MethodsKind or FigureKind)
                {
                    diagnostics.MethodsOfNotDescribed(item.Location, item.Value, target.Block.Kind.Name);
                }
                else if (!covered.Contains(target))
                {
                    covered.Add(target);
                }
            }

            covered = [.. covered.OrderBy(o => o.Block.Location.Line)];
        }

        // Anova sections: covered anova blocks, and the anova blocks that covered checks and comparisons work on.
        var sections = new Dictionary<string, MethodsSection>(StringComparer.Ordinal);
        MethodsSection? SectionFor(string anovaId, bool isCovered)
        {
            if (context.Outcomes.GetValueOrDefault(anovaId) is not AnovaOutcome { Fit: not null, Ancova: null } anova)
            {
                return null;
            }

            if (!sections.TryGetValue(anovaId, out var s))
            {
                s = new MethodsSection { Anova = anova, Covered = isCovered };
                sections[anovaId] = s;
            }

            return s;
        }

        foreach (var o in covered.OfType<AnovaOutcome>())
        {
            SectionFor(o.Block.Id, true);
        }

        foreach (var o in covered)
        {
            switch (o)
            {
                case AssumptionsOutcome a when a.Review is not null && SectionFor(a.Block.Of!.Id, false) is { } s:
                    s.Checks ??= a;
                    break;
                case PostHocOutcome p when p.Families.Count > 0 && SectionFor(p.Block.Of!.Id, false) is { } s:
                    s.PostHocs.Add(p);
                    break;
                case PowerOutcome w when w.Values.Count + w.Required.Count > 0:
                    if (w.Block.OptionsOf<PowerKind.Options>().Of is { } of && sections.TryGetValue(of, out var ps))
                    {
                        ps.Powers.Add(w);
                    }
                    else
                    {
                        outcome.Powers.Add(w);
                    }

                    break;
                case SummaryOutcome sum when sum.Groups.Count > 0:
                    outcome.Summaries.Add(sum);
                    break;
                case RanksOutcome r when r.Test is not null:
                    outcome.Ranks.Add(r);
                    break;
                case PostHocOutcome { Adjusted: true } adjusted when adjusted.Families.Count > 0:
                    outcome.Others.Add(adjusted);
                    break;
                case AnovaOutcome { Ancova: not null } ancova:
                    // Covariates: the anova renderer writes its own sentences (with its checks and comparisons).
                    outcome.Others.Add(ancova);
                    break;
                case AnovaOutcome { Design: not null } design:
                    // A declared layout: the anova renderer writes its own sentences.
                    outcome.Others.Add(design);
                    break;
                case AnovaOutcome or AssumptionsOutcome or PostHocOutcome or PowerOutcome or SummaryOutcome or RanksOutcome:
                    break;
                case var other when other.GetType() != typeof(BlockOutcome):
                    // A block that failed has a plain outcome and nothing to say.
                    outcome.Others.Add(other);
                    break;
            }
        }

        var id = block.Id;
        foreach (var s in sections.Values.OrderBy(s => s.Anova.Block.Location.Line))
        {
            var a = s.Anova;
            var inputs = context.Inputs(a.Block);

            // The cell table: the rows' cells or the database's, the same view on either route.
            var table = a.Cells!;
            foreach (var cell in table.Cells)
            {
                var label = table.Label(cell);
                s.Cells.Add((label, context.Results.Add(id, TestName.Design, a.Block.Id, label, null, Stat.N, cell.Count, inputs)));
            }

            s.Total = context.Results.Add(id, TestName.Design, a.Block.Id, null, null, Stat.NTotal, table.Count, inputs);
            s.Dropped = context.Results.Add(id, TestName.Design, a.Block.Id, null, null, Stat.DroppedMissing, table.Dropped, inputs);

            ReviewValues(context, id, s, inputs);
            outcome.Sections.Add(s);
        }

        var names = new List<string>();
        foreach (var o in covered)
        {
            var b = o.Block.Of ?? o.Block;
            if (b.Data is { } d && !names.Contains(d))
            {
                names.Add(d);
            }

            if (o is PowerOutcome pw && pw.Block.OptionsOf<PowerKind.Options>().Of is { } pof && context.Outcomes.GetValueOrDefault(pof)?.Block.Data is { } pd && !names.Contains(pd))
            {
                names.Add(pd);
            }
        }

        foreach (var spec in context.Header.Datasets.Where(d => names.Contains(d.Name)))
        {
            if (context.Datasets.GetValueOrDefault(spec.Name) is not { } ds)
            {
                continue;
            }

            outcome.Inputs.Add((
                new MethodsLoadedDatasetView(spec.Name, ds.Path, ds.Sha256, ds.Aggregate is not null),
                context.Results.Add(id, TestName.Input, spec.Name, null, null, Stat.Rows, ds.Rows, [spec.Name]),
                context.Results.Add(id, TestName.Input, spec.Name, null, null, Stat.RowsUsed, ds.RowsUsed, [spec.Name])));
        }

        return outcome;
    }

    /// <summary>The checks the text quotes: from an assumptions block of the anova if there is one, else recorded here.</summary>
    private static void ReviewValues(EvaluationContext context, string id, MethodsSection s, IReadOnlyList<string> inputs)
    {
        var a = s.Anova;
        var checks = s.Checks ?? context.Outcomes.Values.OfType<AssumptionsOutcome>()
            .Where(o => o.Anova == a && o.Review is not null)
            .OrderBy(o => o.Block.Location.Line)
            .FirstOrDefault();
        if (checks is not null)
        {
            foreach (var (test, values) in checks.Values)
            {
                s.Review[test] = values;
            }

            return;
        }

        // Only the checks the automatic rules read (they ran for the anova block's choices). On the
        // cells route the rule read Bartlett's test, which the anova block recorded itself.
        var options = a.Block.OptionsOf<AnovaKind.Options>();
        if (!a.RowsAvailable)
        {
            if (a.Bartlett is { } bartlett && options.Welch == "auto")
            {
                s.Review["bartlett"] = bartlett;
            }

            return;
        }

        if (a.Data!.Factors.Count != 1 || options.Welch != "auto")
        {
            return;
        }

        var review = a.Review;
        var term = a.Data.Factors[0].Spec.Name;
        var level = a.Block.Id;
        var bf = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        bf[Stat.F] = context.Results.Add(id, TestName.BrownForsythe, term, level, null, Stat.F, review.BrownForsythe.F, inputs);
        bf[Stat.Df1] = context.Results.Add(id, TestName.BrownForsythe, term, level, null, Stat.Df1, review.BrownForsythe.Df1, inputs);
        bf[Stat.Df2] = context.Results.Add(id, TestName.BrownForsythe, term, level, null, Stat.Df2, review.BrownForsythe.Df2, inputs);
        bf[Stat.P] = context.Results.Add(id, TestName.BrownForsythe, term, level, null, Stat.P, review.BrownForsythe.P, inputs);
        s.Review["brown_forsythe"] = bf.AsReadOnly();
        if (review.WantsRankTest)
        {
            var sw = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            sw[Stat.W] = context.Results.Add(id, TestName.ShapiroWilk, "residual", level, null, Stat.W, review.Normality.W, inputs);
            sw[Stat.P] = context.Results.Add(id, TestName.ShapiroWilk, "residual", level, null, Stat.P, review.Normality.P, inputs);
            s.Review["shapiro_wilk"] = sw.AsReadOnly();
        }
    }
}
