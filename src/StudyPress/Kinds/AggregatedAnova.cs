using System.Globalization;
using StudyPress.Binding;
using StudyPress.Data.Sources;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;

namespace StudyPress.Kinds;

/// <summary>
/// An <c>anova</c> block on a dataset the database aggregated (<c>aggregate: true</c>): the table,
/// the level means, Welch's F and Bartlett's test come from the per-cell counts, means and sums of
/// squares (<see cref="CellStatisticsAnova"/>, <see cref="GroupStatisticsTests"/>); what needs the
/// rows (residual checks, rank tests, figures) is not run, and the block says so.
/// The manifest values have the same names as those of a block on loaded rows.
/// </summary>
public static class AggregatedAnova
{
    public const string MethodNote = "ANOVA table, level means, Welch's F and Bartlett's test were computed from per-cell counts, means and sums of squares computed by the database (aggregate: true). The checks that need the rows (normality of the residuals, Brown–Forsythe/Levene, outliers, run order), the Kruskal–Wallis test and the figures were not run: the rows were not loaded.";

    public sealed class Outcome(BoundBlock block) : BlockOutcome(block)
    {
        public CellAnovaResult? Result { get; set; }

        public IReadOnlyList<FactorSpec> Factors { get; set; } = [];

        public List<(AnovaTerm Term, Dictionary<string, ResultValue> Values)> Terms { get; } = [];

        public Dictionary<string, ResultValue> Residual { get; } = new(StringComparer.Ordinal);

        public Dictionary<string, ResultValue> Total { get; } = new(StringComparer.Ordinal);

        public List<(string Factor, string Level, Dictionary<string, ResultValue> Values)> Means { get; } = [];

        public Dictionary<string, ResultValue>? Welch { get; set; }

        public Dictionary<string, ResultValue>? Bartlett { get; set; }

        public List<string> Decisions { get; } = [];
    }

    /// <summary>Whether the block reads an aggregated dataset.</summary>
    public static bool Applies(EvaluationContext context, BoundBlock block) =>
        block.Data is not null && context.Datasets.TryGetValue(block.Data, out var d) && d.Aggregate is not null;

    /// <summary>
    /// The block's cells: the dataset's cells that pass 'where' and have the block's factors and
    /// response, pooled over the factors the block does not use.
    /// </summary>
    public static (IReadOnlyList<IReadOnlyList<string>> Levels, List<CellStatistics> Cells, long Dropped)? Cells(EvaluationContext context, BoundBlock block)
    {
        var ds = context.Datasets[block.Data!];
        var table = ds.Aggregate!;
        int Pos(string factor) => table.Factors.Select((f, i) => (f, i)).First(p => p.f.Name == factor).i;
        var factorPos = block.Factors.Select(f => Pos(f.Name)).ToArray();
        var where = block.Where.Select(w => (Pos: Pos(w.Factor.Name), w.Levels)).ToArray();
        var pooled = new SortedDictionary<string, (int[] Codes, AggregateStat Stat)>(StringComparer.Ordinal);
        long dropped = 0;
        for (var i = 0; i < table.Cells.Count; i++)
        {
            var cell = table.Cells[i];
            if (where.Any(w => cell.Codes[w.Pos] < 0 || !w.Levels.Contains(table.Levels[w.Pos][cell.Codes[w.Pos]])))
            {
                continue;
            }

            var stat = cell.Stats[block.Response!];
            if (factorPos.Any(p => cell.Codes[p] < 0))
            {
                dropped += cell.Rows;
                continue;
            }

            dropped += cell.Rows - stat.N;
            if (stat.N == 0)
            {
                continue;
            }

            ds.Used[i] = true;
            var codes = factorPos.Select(p => cell.Codes[p]).ToArray();
            var key = string.Join(",", codes.Select(c => c.ToString("D9", CultureInfo.InvariantCulture)));
            pooled[key] = pooled.TryGetValue(key, out var before) ? (codes, AggregateSource.Pool(before.Stat, stat)) : (codes, stat);
        }

        if (pooled.Count == 0)
        {
            return null;
        }

        // Keep only the levels present, as the row selection does.
        var present = factorPos.Select((_, k) => new SortedSet<int>(pooled.Values.Select(v => v.Codes[k])).ToList()).ToArray();
        var levels = factorPos.Select((p, k) => (IReadOnlyList<string>)[.. present[k].Select(c => table.Levels[p][c])]).ToList();
        var cells = pooled.Values
            .Select(v => new CellStatistics([.. v.Codes.Select((c, k) => present[k].IndexOf(c))], v.Stat.N, v.Stat.CentredMean, v.Stat.SumSquares))
            .ToList();
        return (levels, cells, dropped);
    }

    public static BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, AnovaKind.Options options, DiagnosticBag diagnostics)
    {
        var outcome = new Outcome(block);
        var ds = context.Datasets[block.Data!];
        if (options.Transform != TransformKind.None)
        {
            diagnostics.AggregateProblem(block.Location, ds.Spec.Name, $"'transform: {options.TransformName}' needs the rows, and the database aggregated them (aggregate: true); transform the column in the query instead");
            return outcome;
        }

        if (Cells(context, block) is not { } selected)
        {
            diagnostics.NoRowsSelected(block.Location);
            return outcome;
        }

        var (levels, cells, dropped) = selected;
        for (var k = 0; k < block.Factors.Count; k++)
        {
            if (levels[k].Count < 2)
            {
                diagnostics.TooFewGroups(block.FactorsLocation, block.Factors[k].Name, levels[k].Count);
                return outcome;
            }
        }

        if (cells.All(c => c.Count == 1) && (block.Factors.Count == 1 || options.Interaction))
        {
            diagnostics.NoResidualDf(block.Location);
            return outcome;
        }

        var input = new CellAnovaInput(
            [.. block.Factors.Select((f, k) => new CellFactor(f.Name, levels[k]))],
            cells,
            options.Interaction,
            options.SsType,
            context.Header.Alpha);
        if (CellStatisticsAnova.Check(input) is { } problem)
        {
            if (problem.Kind == DesignProblemKind.EmptyCell && problem.Cell is { } cell)
            {
                diagnostics.EmptyCell(block.FactorsLocation, string.Join(", ", cell.Select((l, k) => $"{block.Factors[k].Name} = '{l}'")));
            }
            else
            {
                diagnostics.DesignProblem(block.FactorsLocation, problem.Message);
            }

            return outcome;
        }

        var result = CellStatisticsAnova.Fit(input);
        outcome.Result = result;
        outcome.Factors = block.Factors;
        var inputs = context.Inputs(block);
        var centre = ds.Aggregate!.Centres[block.Response!];
        AnovaKind.RecordTable(context, block, result.Terms, result.ResidualSumOfSquares, result.ResidualDf, result.ResidualMeanSquare, result.TotalSumOfSquares, result.TotalDf, inputs, outcome.Terms, outcome.Residual, outcome.Total);

        // Level means (each factor's levels, pooled over the other factors).
        for (var k = 0; k < block.Factors.Count; k++)
        {
            for (var l = 0; l < levels[k].Count; l++)
            {
                var of = cells.Where(c => c.Levels[k] == l).Select(c => new AggregateStat(c.Count, c.Mean, c.SumOfSquares)).Aggregate(AggregateSource.Pool);
                var name = block.Factors[k].Name;
                var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    ["n"] = context.Results.Add(block.Id, "means", name, levels[k][l], null, "n", of.N, inputs),
                    ["mean"] = context.Results.Add(block.Id, "means", name, levels[k][l], null, "mean", of.CentredMean + centre, inputs),
                };
                outcome.Means.Add((name, levels[k][l], values));
            }
        }

        if (block.Factors.Count == 1)
        {
            OneFactor(context, block, outcome, options, cells, inputs);
        }

        var small = cells.Where(c => c.Count is > 1 and < 5).ToList();
        if (cells.Any(c => c.Count == 1))
        {
            outcome.Warnings.Add("Some groups have a single observation. They add nothing to the residual variance, and no check of their spread is possible.");
        }

        if (small.Count > 0)
        {
            outcome.Warnings.Add("Some groups have fewer than 5 observations: the test has little power to detect differences.");
        }

        if (block.Factors.Count > 1 && cells.Select(c => c.Count).Distinct().Count() > 1)
        {
            outcome.Warnings.Add("The design is unbalanced: the sums of squares depend on the SS type chosen.");
        }

        outcome.Notes.Add(MethodNote);
        if (dropped > 0)
        {
            outcome.Notes.Add(string.Create(CultureInfo.InvariantCulture, $"{dropped} row(s) with a missing value were left out of this analysis."));
        }

        return outcome;
    }

    private static void OneFactor(EvaluationContext context, BoundBlock block, Outcome outcome, AnovaKind.Options options, List<CellStatistics> cells, IReadOnlyList<string> inputs)
    {
        var groups = cells.Select(c => new GroupStatistics(c.Count, c.Mean, c.SumOfSquares)).ToList();
        var name = block.Factors[0].Name;
        var bt = GroupStatisticsTests.Bartlett(groups);
        outcome.Bartlett = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
        {
            ["statistic"] = context.Results.Add(block.Id, "bartlett", name, null, null, "statistic", bt.Statistic, inputs),
            ["df"] = context.Results.Add(block.Id, "bartlett", name, null, null, "df", bt.Df, inputs),
            ["p"] = context.Results.Add(block.Id, "bartlett", name, null, null, "p", bt.P, inputs),
        };
        var alpha = context.Header.Alpha;
        var show = options.Welch == "yes";
        if (options.Welch == "yes")
        {
            outcome.Decisions.Add("Welch's F is shown because it was requested (welch: yes).");
        }
        else if (options.Welch == "auto")
        {
            var a = alpha.ToString("R", CultureInfo.InvariantCulture);
            if (bt.P.IsDefined && bt.P.Value < alpha)
            {
                show = true;
                outcome.Decisions.Add($"Rule fired (welch: auto): on aggregated data the variances are compared by Bartlett's test (the rows needed by Brown–Forsythe were not loaded); it found unequal group variances (p {P(bt.P)} < α = {a}), so Welch's F, which does not assume equal variances, is shown and is the test to read. Bartlett's test is sensitive to non-normality, which could not be checked.");
            }
            else
            {
                outcome.Decisions.Add(bt.P.IsDefined
                    ? $"Welch's F is not shown (welch: auto): Bartlett's test, used on aggregated data, found no evidence of unequal variances (p {P(bt.P)} ≥ α = {a}). Set 'welch: yes' to show it anyway."
                    : $"Welch's F is not shown (welch: auto): equal variances could not be checked ({bt.P.Reason}).");
            }
        }

        if (show)
        {
            var w = GroupStatisticsTests.Welch(groups);
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void AddW(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, "welch", name, null, null, stat, q, inputs);
            AddW("f", w.F);
            AddW("df1", Quantity.Of(w.Df1));
            AddW("df2", w.Df2);
            AddW("p", w.P);
            outcome.Welch = values;
        }
    }

    private static string P(Quantity p) => p.Value < 0.001 ? "< 0.001" : "= " + p.Value.ToString("F3", CultureInfo.InvariantCulture);

    public static void Render(HtmlWriter html, Outcome o, RenderContext context)
    {
        if (o.Result is null)
        {
            return;
        }

        var caption = o.Block.Caption ?? $"Analysis of variance of {o.Block.Response}";
        var table = new HtmlTable("anova", caption, ["Source", "SS", "df", "MS", "F", "p"]);
        foreach (var (term, v) in o.Terms)
        {
            table.Row(Label(term, o), [V(v, "ss"), V(v, "df"), V(v, "ms"), V(v, "f"), V(v, "p")]);
        }

        table.Row("Residual", [V(o.Residual, "ss"), V(o.Residual, "df"), V(o.Residual, "ms"), string.Empty, string.Empty]);
        table.Row("Total", [V(o.Total, "ss"), V(o.Total, "df"), string.Empty, string.Empty, string.Empty], "total");
        table.WriteTo(html);
        if (o.Terms.Count > 1)
        {
            html.Raw("<p class=\"method\">").Text(AnovaKind.SsTypeText(o.Result.SsType)).Raw("</p>");
        }

        var effects = new HtmlTable("effects", "Critical F and effect sizes", ["Term", "F crit (α = " + context.AlphaText + ")", "η²", "partial η²", "ω²", "Cohen's f"]);
        foreach (var (term, v) in o.Terms)
        {
            effects.Row(Label(term, o), [V(v, "f_crit"), V(v, "eta2"), V(v, "partial_eta2"), V(v, "omega2"), V(v, "cohen_f")]);
        }

        effects.WriteTo(html);
        var factorial = o.Factors.Count > 1;
        var means = new HtmlTable("means", "Level means", ["Level", "n", "Mean"]);
        foreach (var (factor, level, v) in o.Means)
        {
            var label = factorial ? StudyPress.Charts.BidiText.Isolate(o.Factors.First(f => f.Name == factor).Display) + ": " + StudyPress.Charts.BidiText.Isolate(level) : level;
            means.Row(label, [V(v, "n"), V(v, "mean")]);
        }

        means.WriteTo(html);
        if (o.Welch is { } w)
        {
            var welch = new HtmlTable("welch", "Welch's test (unequal variances allowed)", ["Source", "F", "df1", "df2", "p"]);
            welch.Row(Label(o.Terms[0].Term, o), [V(w, "f"), V(w, "df1"), V(w, "df2"), V(w, "p")]);
            welch.WriteTo(html);
        }

        if (o.Bartlett is { } b)
        {
            var bt = new HtmlTable("bartlett", "Bartlett's test of equal variances (from the cell variances)", ["Source", "χ²", "df", "p"]);
            bt.Row(Label(o.Terms[0].Term, o), [V(b, "statistic"), V(b, "df"), V(b, "p")]);
            bt.WriteTo(html);
        }

        html.Raw("<div class=\"reading\">");
        foreach (var d in o.Decisions)
        {
            html.Raw("<p class=\"decision\">").Text(d).Raw("</p>");
        }

        foreach (var (term, v) in o.Terms)
        {
            var label = HtmlWriter.Escape(Label(term, o));
            if (!term.F.IsDefined || !term.P.IsDefined)
            {
                html.Raw("<p>").Raw($"{label}: the F test is not defined here ({HtmlWriter.Escape(term.F.Reason ?? term.P.Reason)}).").Raw("</p>");
                continue;
            }

            var stat = $"F({V(v, "df")}, {V(o.Residual, "df")}) = {V(v, "f")}, p {AnovaKind.PText(v["p"], context)}";
            var verdict = term.P.Value < context.Alpha ? "rejects" : "does not reject";
            html.Raw("<p>").Raw($"{label}: at α = {context.AlphaText} the test {verdict} the hypothesis of no effect ({stat}).").Raw("</p>");
        }

        html.Raw("</div>");
        string V(Dictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    private static string Label(AnovaTerm term, Outcome o) =>
        string.Join(" × ", term.Factors.Select(n => o.Factors.First(f => f.Name == n).Display));
}
