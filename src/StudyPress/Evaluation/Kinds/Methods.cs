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

    public AssumptionsOutcome? Checks { get; init; }

    public IReadOnlyList<PostHocOutcome> PostHocs { get; init; } = [];

    public IReadOnlyList<PowerOutcome> Powers { get; init; } = [];

    /// <summary>Cell label → traced size, in cell order.</summary>
    public IReadOnlyList<(string Label, ResultValue N)> Cells { get; init; } = [];

    public ResultValue? Total { get; init; }

    public ResultValue? Dropped { get; init; }

    /// <summary>Review values by test then statistic: from an assumptions block of the anova, else recorded here.</summary>
    public IReadOnlyDictionary<string, IReadOnlyDictionary<string, ResultValue>> Review { get; init; } = NoReview;

    private static readonly IReadOnlyDictionary<string, IReadOnlyDictionary<string, ResultValue>> NoReview = new Dictionary<string, IReadOnlyDictionary<string, ResultValue>>(StringComparer.Ordinal).AsReadOnly();
}

/// <summary>A methods block evaluated: the anova sections and the other covered blocks, in line order, and the inputs they read.</summary>
public sealed class MethodsOutcome(BoundBlock block) : BlockOutcome(block)
{
    public IReadOnlyList<MethodsSection> Sections { get; init; } = [];

    public IReadOnlyList<SummaryOutcome> Summaries { get; init; } = [];

    public IReadOnlyList<RanksOutcome> Ranks { get; init; } = [];

    /// <summary>Power blocks not tied to an anova block.</summary>
    public IReadOnlyList<PowerOutcome> Powers { get; init; } = [];

    /// <summary>Covered blocks of the other kinds (their renderers contribute their own sentences), in line order.</summary>
    public IReadOnlyList<BlockOutcome> Others { get; init; } = [];

    /// <summary>Datasets the covered blocks read, with traced row counts.</summary>
    public IReadOnlyList<(MethodsLoadedDatasetView Dataset, ResultValue Rows, ResultValue RowsUsed)> Inputs { get; init; } = [];

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
        var powers = new List<PowerOutcome>();
        var summaries = new List<SummaryOutcome>();
        var ranks = new List<RanksOutcome>();
        var others = new List<BlockOutcome>();
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
        var sections = new Dictionary<string, SectionParts>(StringComparer.Ordinal);
        SectionParts? SectionFor(string anovaId, bool isCovered)
        {
            if (context.Outcomes.GetValueOrDefault(anovaId) is not AnovaOutcome { Fit: not null, Ancova: null } anova)
            {
                return null;
            }

            if (!sections.TryGetValue(anovaId, out var s))
            {
                s = new SectionParts(anova, isCovered);
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
                        powers.Add(w);
                    }

                    break;
                case SummaryOutcome sum when sum.Groups.Count > 0:
                    summaries.Add(sum);
                    break;
                case RanksOutcome r when r.Test is not null:
                    ranks.Add(r);
                    break;
                case PostHocOutcome { Adjusted: true } adjusted when adjusted.Families.Count > 0:
                    others.Add(adjusted);
                    break;
                case AnovaOutcome { Ancova: not null } ancova:
                    // Covariates: the anova renderer writes its own sentences (with its checks and comparisons).
                    others.Add(ancova);
                    break;
                case AnovaOutcome { Design: not null } design:
                    // A declared layout: the anova renderer writes its own sentences.
                    others.Add(design);
                    break;
                case AnovaOutcome or AssumptionsOutcome or PostHocOutcome or PowerOutcome or SummaryOutcome or RanksOutcome:
                    break;
                case var other when other.GetType() != typeof(BlockOutcome):
                    // A block that failed has a plain outcome and nothing to say.
                    others.Add(other);
                    break;
            }
        }

        var id = block.Id;
        var described = new List<MethodsSection>(sections.Count);
        foreach (var s in sections.Values.OrderBy(s => s.Anova.Block.Location.Line))
        {
            var a = s.Anova;
            var inputs = context.Inputs(a.Block);

            // The cell table: the rows' cells or the database's, the same view on either route.
            var table = a.Cells!;
            var cells = new List<(string Label, ResultValue N)>(table.Cells.Count);
            foreach (var cell in table.Cells)
            {
                var label = table.Label(cell);
                cells.Add((label, context.Results.Add(id, TestName.Design, a.Block.Id, label, null, Stat.N, cell.Count, inputs)));
            }

            var total = context.Results.Add(id, TestName.Design, a.Block.Id, null, null, Stat.NTotal, table.Count, inputs);
            var dropped = context.Results.Add(id, TestName.Design, a.Block.Id, null, null, Stat.DroppedMissing, table.Dropped, inputs);
            described.Add(new MethodsSection
            {
                Anova = a,
                Covered = s.Covered,
                Checks = s.Checks,
                PostHocs = s.PostHocs.AsReadOnly(),
                Powers = s.Powers.AsReadOnly(),
                Cells = cells.AsReadOnly(),
                Total = total,
                Dropped = dropped,
                Review = ReviewValues(context, id, a, s.Checks, inputs).AsReadOnly(),
            });
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

        var datasets = new List<(MethodsLoadedDatasetView Dataset, ResultValue Rows, ResultValue RowsUsed)>();
        foreach (var spec in context.Header.Datasets.Where(d => names.Contains(d.Name)))
        {
            if (context.Datasets.GetValueOrDefault(spec.Name) is not { } ds)
            {
                continue;
            }

            datasets.Add((
                new MethodsLoadedDatasetView(spec.Name, ds.Path, ds.Sha256, ds.Aggregate is not null),
                context.Results.Add(id, TestName.Input, spec.Name, null, null, Stat.Rows, ds.Rows, [spec.Name]),
                context.Results.Add(id, TestName.Input, spec.Name, null, null, Stat.RowsUsed, ds.RowsUsed, [spec.Name])));
        }

        return new MethodsOutcome(block)
        {
            Alpha = context.Header.Alpha,
            Sections = described.AsReadOnly(),
            Summaries = summaries.AsReadOnly(),
            Ranks = ranks.AsReadOnly(),
            Powers = powers.AsReadOnly(),
            Others = others.AsReadOnly(),
            Inputs = datasets.AsReadOnly(),
        };
    }

    /// <summary>The checks the text quotes: from an assumptions block of the anova if there is one, else recorded here.</summary>
    private static Dictionary<string, IReadOnlyDictionary<string, ResultValue>> ReviewValues(EvaluationContext context, string id, AnovaOutcome a, AssumptionsOutcome? covered, IReadOnlyList<string> inputs)
    {
        var review = new Dictionary<string, IReadOnlyDictionary<string, ResultValue>>(StringComparer.Ordinal);
        var checks = covered ?? context.Outcomes.Values.OfType<AssumptionsOutcome>()
            .Where(o => o.Anova == a && o.Review is not null)
            .OrderBy(o => o.Block.Location.Line)
            .FirstOrDefault();
        if (checks is not null)
        {
            foreach (var (test, values) in checks.Values)
            {
                review[test] = values;
            }

            return review;
        }

        // Only the checks the automatic rules read (they ran for the anova block's choices). On the
        // cells route the rule read Bartlett's test, which the anova block recorded itself.
        var options = a.Block.OptionsOf<AnovaKind.Options>();
        if (!a.RowsAvailable)
        {
            if (a.Bartlett is { } bartlett && options.Welch == "auto")
            {
                review["bartlett"] = bartlett;
            }

            return review;
        }

        if (a.Data!.Factors.Count != 1 || options.Welch != "auto")
        {
            return review;
        }

        var rules = a.Review;
        var term = a.Data.Factors[0].Spec.Name;
        var level = a.Block.Id;
        var bf = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        bf[Stat.F] = context.Results.Add(id, TestName.BrownForsythe, term, level, null, Stat.F, rules.BrownForsythe.F, inputs);
        bf[Stat.Df1] = context.Results.Add(id, TestName.BrownForsythe, term, level, null, Stat.Df1, rules.BrownForsythe.Df1, inputs);
        bf[Stat.Df2] = context.Results.Add(id, TestName.BrownForsythe, term, level, null, Stat.Df2, rules.BrownForsythe.Df2, inputs);
        bf[Stat.P] = context.Results.Add(id, TestName.BrownForsythe, term, level, null, Stat.P, rules.BrownForsythe.P, inputs);
        review["brown_forsythe"] = bf.AsReadOnly();
        if (rules.WantsRankTest)
        {
            var sw = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            sw[Stat.W] = context.Results.Add(id, TestName.ShapiroWilk, "residual", level, null, Stat.W, rules.Normality.W, inputs);
            sw[Stat.P] = context.Results.Add(id, TestName.ShapiroWilk, "residual", level, null, Stat.P, rules.Normality.P, inputs);
            review["shapiro_wilk"] = sw.AsReadOnly();
        }

        return review;
    }

    /// <summary>An anova section while the covered blocks are sorted into it (the section itself is built once, with its values).</summary>
    private sealed class SectionParts(AnovaOutcome anova, bool covered)
    {
        public AnovaOutcome Anova { get; } = anova;

        public bool Covered { get; } = covered;

        /// <summary>The first covered assumptions block of the anova (a field: the parts are filled as the blocks are sorted).</summary>
        public AssumptionsOutcome? Checks;

        public List<PostHocOutcome> PostHocs { get; } = [];

        public List<PowerOutcome> Powers { get; } = [];
    }
}
