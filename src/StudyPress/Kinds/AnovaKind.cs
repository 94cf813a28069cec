using System.Globalization;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;

namespace StudyPress.Kinds;

/// <summary>
/// <c>anova</c>: fixed-effects ANOVA table (SS, df, MS, F, p), critical F at alpha, effect sizes
/// (eta², partial eta², omega², Cohen's f) and, for one factor, Welch's F.
/// </summary>
public sealed class AnovaKind : BlockKind
{
    public override string Name => "anova";

    public override string PrimaryTest => "anova";

    public override IReadOnlyList<string> OwnKeys { get; } = ["interaction", "ss-type", "transform", "welch"];

    public sealed record Options(bool Interaction, SumOfSquaresType SsType, string Transform, string Welch);

    public override object? BindOptions(KeyReader keys, StudyHeader header, DiagnosticBag diagnostics)
    {
        var ss = keys.Integer("ss-type", 1, 3) ?? 2;
        return new Options(
            keys.Boolean("interaction") ?? true,
            (SumOfSquaresType)ss,
            keys.Choice("transform", ["none"]) ?? "none",
            keys.Choice("welch", ["auto", "yes", "no"]) ?? "auto");
    }

    public sealed class Outcome(BoundBlock block) : BlockOutcome(block)
    {
        public AnovaResult? Result { get; set; }

        public BlockData? Data { get; set; }

        public List<(AnovaTerm Term, Dictionary<string, ResultValue> Values)> Terms { get; } = [];

        public Dictionary<string, ResultValue> Residual { get; } = new(StringComparer.Ordinal);

        public Dictionary<string, ResultValue> Total { get; } = new(StringComparer.Ordinal);

        public Dictionary<string, ResultValue>? Welch { get; set; }

        public string? WelchReason { get; set; }
    }

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = (Options)block.Options!;
        var outcome = new Outcome(block);
        var data = context.Select(block, diagnostics);
        if (data is null)
        {
            return outcome;
        }

        outcome.Data = data;
        foreach (var f in data.Factors)
        {
            if (f.Levels.Count < 2)
            {
                diagnostics.TooFewGroups(block.FactorsLocation, f.Spec.Name, f.Levels.Count);
                return outcome;
            }
        }

        var cells = data.Cells();
        if (cells.All(c => c.Values.Length == 1))
        {
            diagnostics.NoResidualDf(block.Location);
            return outcome;
        }

        var input = new AnovaInput(data.Response, [.. data.Factors.Select(f => f.ToColumn())], options.Interaction, options.SsType, context.Header.Alpha);
        var result = FactorialAnova.Fit(input);
        outcome.Result = result;
        var inputs = context.Inputs(block);
        foreach (var t in result.Terms)
        {
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void Add(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, "anova", t.Name, null, null, stat, q, inputs);
            Add("ss", Quantity.Of(t.SumOfSquares));
            Add("df", Quantity.Of(t.Df));
            Add("ms", t.MeanSquare);
            Add("f", t.F);
            Add("p", t.P);
            Add("f_crit", t.FCritical);
            Add("eta2", t.EtaSquared);
            Add("partial_eta2", t.PartialEtaSquared);
            Add("omega2", t.OmegaSquared);
            Add("cohen_f", t.CohenF);
            outcome.Terms.Add((t, values));
        }

        outcome.Residual["ss"] = context.Results.Add(block.Id, "anova", "residual", null, null, "ss", result.ResidualSumOfSquares, inputs);
        outcome.Residual["df"] = context.Results.Add(block.Id, "anova", "residual", null, null, "df", result.ResidualDf, inputs);
        outcome.Residual["ms"] = context.Results.Add(block.Id, "anova", "residual", null, null, "ms", result.ResidualMeanSquare, inputs);
        outcome.Total["ss"] = context.Results.Add(block.Id, "anova", "total", null, null, "ss", result.TotalSumOfSquares, inputs);
        outcome.Total["df"] = context.Results.Add(block.Id, "anova", "total", null, null, "df", result.TotalDf, inputs);

        if (data.Factors.Count == 1 && options.Welch != "no")
        {
            var factor = data.Factors[0];
            var groups = factor.Split(data.Response);
            var w = WelchAnova.Test(groups);
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void AddW(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, "welch", factor.Spec.Name, null, null, stat, q, inputs);
            AddW("f", w.F);
            AddW("df1", Quantity.Of(w.Df1));
            AddW("df2", w.Df2);
            AddW("p", w.P);
            outcome.Welch = values;
            outcome.WelchReason = options.Welch == "yes"
                ? "Welch's F was requested (welch: yes)."
                : "Welch's F is shown beside the classical F (welch: auto): it does not assume equal group variances, and where the variances differ it is the one to read.";
        }

        AddCautions(outcome, data);
        return outcome;
    }

    private static void AddCautions(Outcome outcome, BlockData data)
    {
        var cells = data.Cells();
        var ones = cells.Where(c => c.Values.Length == 1).Select(c => c.Label).ToList();
        if (ones.Count > 0)
        {
            outcome.Warnings.Add($"Single-observation group(s): {string.Join(", ", ones)}. They add nothing to the residual variance, and no check of their spread is possible.");
        }

        var small = cells.Where(c => c.Values.Length is > 1 and < 5).Select(c => c.Label).ToList();
        if (small.Count > 0)
        {
            outcome.Warnings.Add($"Small group(s) (fewer than 5 observations): {string.Join(", ", small)}. The test has little power to detect differences, and normality and equal variances cannot be judged well from so few values.");
        }

        var sizes = cells.Select(c => c.Values.Length).Distinct().Count();
        if (sizes > 1 && data.Factors.Count > 1)
        {
            outcome.Warnings.Add("The design is unbalanced: the sums of squares depend on the SS type, and with interactions present the main effects are hard to interpret on their own.");
        }

        if (data.DroppedMissing > 0)
        {
            outcome.Notes.Add(string.Create(CultureInfo.InvariantCulture, $"{data.DroppedMissing} row(s) with a missing value were left out of this analysis."));
        }
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (Outcome)outcome;
        if (o.Result is null || o.Data is null)
        {
            return;
        }

        var caption = o.Block.Caption ?? $"Analysis of variance of {o.Data.ResponseName}";
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
            html.Raw("<p class=\"method\">").Text(SsTypeText(o.Result.SsType)).Raw("</p>");
        }

        var effects = new HtmlTable("effects", "Critical F and effect sizes", ["Term", "F crit (α = " + context.AlphaText + ")", "η²", "partial η²", "ω²", "Cohen's f"]);
        foreach (var (term, v) in o.Terms)
        {
            effects.Row(Label(term, o), [V(v, "f_crit"), V(v, "eta2"), V(v, "partial_eta2"), V(v, "omega2"), V(v, "cohen_f")]);
        }

        effects.WriteTo(html);

        if (o.Welch is { } w)
        {
            var welch = new HtmlTable("welch", "Welch's test (unequal variances allowed)", ["Source", "F", "df1", "df2", "p"]);
            welch.Row(Label(o.Terms[0].Term, o), [V(w, "f"), V(w, "df1"), V(w, "df2"), V(w, "p")]);
            welch.WriteTo(html);
        }

        html.Raw("<div class=\"reading\">");
        foreach (var (term, v) in o.Terms)
        {
            html.Raw("<p>").Raw(Interpret(term, v, o, context)).Raw("</p>");
        }

        if (o.WelchReason is not null)
        {
            html.Raw("<p>").Text(o.WelchReason).Raw("</p>");
        }

        html.Raw("</div>");
        string V(Dictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    private static string Label(AnovaTerm term, Outcome o)
    {
        var names = term.Factors.Select(n => o.Data!.Factors.First(f => f.Spec.Name == n).Spec.Display);
        return string.Join(" × ", names);
    }

    internal static string SsTypeText(SumOfSquaresType type) => type switch
    {
        SumOfSquaresType.Sequential => "Sequential (type 1) sums of squares: each term adjusted for the terms listed above it.",
        SumOfSquaresType.Hierarchical => "Hierarchical (type 2) sums of squares: each term adjusted for every term that does not contain it.",
        _ => "Marginal (type 3) sums of squares, sum-to-zero coding: each term adjusted for every other term.",
    };

    private static string Interpret(AnovaTerm term, Dictionary<string, ResultValue> v, Outcome o, RenderContext context)
    {
        var label = HtmlWriter.Escape(Label(term, o));
        if (!term.F.IsDefined || !term.P.IsDefined)
        {
            return $"{label}: the F test is not defined here ({HtmlWriter.Escape(term.F.Reason ?? term.P.Reason)}).";
        }

        var stat = $"F({HtmlWriter.ValueHtml(v["df"], context)}, {HtmlWriter.ValueHtml(o.Residual["df"], context)}) = {HtmlWriter.ValueHtml(v["f"], context)}, p {PText(v["p"], context)}";
        var isInteraction = term.Factors.Count > 1;
        var what = isInteraction
            ? $"the effect of one of {label} depends on the level of the other"
            : $"the mean of {HtmlWriter.Escape(o.Data!.ResponseName)} differs between at least two levels of {label}";
        return term.P.Value < context.Alpha
            ? $"{label}: at α = {context.AlphaText} the test rejects the hypothesis of no effect ({stat}); the data indicate that {what}. It does not say which levels differ or whether the difference matters in practice; see the effect sizes and, for pairs, a post-hoc comparison."
            : $"{label}: at α = {context.AlphaText} the test does not reject the hypothesis of no effect ({stat}). This is not evidence that there is no effect: a real difference may be too small for this design to detect.";
    }

    internal static string PText(ResultValue p, RenderContext context)
    {
        var shown = context.Format.Format("p", p.Value.Value);
        var html = HtmlWriter.ValueHtml(p, context);
        return shown.StartsWith('<') ? html : "= " + html;
    }
}
