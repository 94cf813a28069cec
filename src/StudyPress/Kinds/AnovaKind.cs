using System.Globalization;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Nonparametric;

namespace StudyPress.Kinds;

/// <summary>
/// <c>anova</c>: fixed-effects ANOVA by least squares, one-way or factorial (SS type 1, 2 or 3),
/// with an optional response transformation; ANOVA table (SS, df, MS, F, p), critical F at alpha,
/// effect sizes (eta², partial eta², omega², Cohen's f), level means, and for one factor Welch's F
/// (always with <c>welch: yes</c>; with <c>auto</c> when Brown–Forsythe finds unequal variances) and
/// Kruskal–Wallis (with <c>auto</c> when residuals are non-normal and groups small).
/// </summary>
public sealed class AnovaKind : BlockKind
{
    public override string Name => "anova";

    public override string PrimaryTest => "anova";

    public override IReadOnlyList<string> OwnKeys { get; } = ["interaction", "ss-type", "transform", "welch"];

    private static readonly Dictionary<string, TransformKind> Transforms = new(StringComparer.Ordinal)
    {
        ["none"] = TransformKind.None,
        ["log"] = TransformKind.Log,
        ["log10"] = TransformKind.Log10,
        ["sqrt"] = TransformKind.Sqrt,
        ["reciprocal"] = TransformKind.Reciprocal,
        ["box-cox"] = TransformKind.BoxCox,
    };

    public sealed record Options(bool Interaction, SumOfSquaresType SsType, string TransformName, TransformKind Transform, string Welch);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var ss = keys.Integer("ss-type", 1, 3) ?? 2;
        var transform = keys.Choice("transform", [.. Transforms.Keys]) ?? "none";
        return new Options(
            keys.Boolean("interaction") ?? true,
            (SumOfSquaresType)ss,
            transform,
            Transforms[transform],
            keys.Choice("welch", ["auto", "yes", "no"]) ?? "auto");
    }

    public sealed class Outcome(BoundBlock block) : BlockOutcome(block)
    {
        private AssumptionReview? review;

        public AnovaResult? Result { get; set; }

        public BlockData? Data { get; set; }

        /// <summary>The model input: the (transformed) response, centred, and the factors.</summary>
        public AnovaInput? Input { get; set; }

        public TransformedResponse? Transformed { get; set; }

        /// <summary>Centre subtracted from the (transformed) response before fitting.</summary>
        public double ResponseCentre { get; set; }

        public List<(AnovaTerm Term, Dictionary<string, ResultValue> Values)> Terms { get; } = [];

        public Dictionary<string, ResultValue> Residual { get; } = new(StringComparer.Ordinal);

        public Dictionary<string, ResultValue> Total { get; } = new(StringComparer.Ordinal);

        public List<(string Factor, string Level, Dictionary<string, ResultValue> Values)> Means { get; } = [];

        public Dictionary<string, ResultValue>? Welch { get; set; }

        /// <summary>The Box–Cox estimate's values (lambda, lambda_low, lambda_high), when that transform was used.</summary>
        public Dictionary<string, ResultValue> BoxCox { get; } = new(StringComparer.Ordinal);

        public Dictionary<string, ResultValue>? Ranks { get; set; }

        /// <summary>Which automatic rules fired, in plain words.</summary>
        public List<string> Decisions { get; } = [];

        /// <summary>The assumption checks of this model, computed when first needed.</summary>
        public AssumptionReview Review => review ??= AssumptionReview.Run(this);

        public bool ReadWelch { get; set; }
    }

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = (Options)block.Options!;
        if (AggregatedAnova.Applies(context, block))
        {
            return AggregatedAnova.Evaluate(context, block, options, diagnostics);
        }

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
        if (cells.All(c => c.Values.Length == 1) && (data.Factors.Count == 1 || options.Interaction))
        {
            diagnostics.NoResidualDf(block.Location);
            return outcome;
        }

        var factors = data.Factors.Select(f => f.ToColumn()).ToList();
        var response = data.Response;
        var centre = data.Centre;
        if (options.Transform != TransformKind.None)
        {
            var t = ResponseTransform.Apply(data.Values, options.Transform, factors, options.Interaction, context.Header.Alpha);
            if (t.Error is { } error)
            {
                if (error.Index is { } index)
                {
                    var line = data.Dataset.Lines[data.Rows[index]];
                    diagnostics.TransformRow(
                        new SourceLocation(DataDisplay(context, data), line - 1, 0),
                        options.TransformName,
                        data.ResponseName,
                        (error.Value ?? data.Values[index]).ToString("R", CultureInfo.InvariantCulture),
                        NeedText(options.Transform));
                }
                else
                {
                    diagnostics.TransformDomain(block.Location, options.TransformName, error.Message);
                }

                return outcome;
            }

            outcome.Transformed = t.Result;
            centre = Groups.Mean(t.Result!.Values);
            response = [.. t.Result.Values.Select(v => v - centre)];
        }

        outcome.ResponseCentre = centre;
        var input = new AnovaInput(response, factors, options.Interaction, options.SsType, context.Header.Alpha)
        {
            // Exact decimal data give exact sums of squares (one factor, untransformed response).
            Exact = options.Transform == TransformKind.None && data.Factors.Count == 1 ? data.Exact?.AsScaled() : null,
        };
        if (data.Factors.Count > 1 && AnovaDesign.Check(input) is { } problem)
        {
            if (problem.Kind == DesignProblemKind.EmptyCell && problem.Cell is { } cell)
            {
                diagnostics.EmptyCell(block.FactorsLocation, string.Join(", ", cell.Select((l, k) => $"{factors[k].Name} = '{l}'")));
            }
            else
            {
                diagnostics.DesignProblem(block.FactorsLocation, problem.Message);
            }

            return outcome;
        }

        outcome.Input = input;
        var result = FactorialAnova.Fit(input);
        outcome.Result = result;
        var inputs = context.Inputs(block);
        AnovaKind.RecordTable(context, block, result.Terms, result.ResidualSumOfSquares, result.ResidualDf, result.ResidualMeanSquare, result.TotalSumOfSquares, result.TotalDf, inputs, outcome.Terms, outcome.Residual, outcome.Total);

        if (outcome.Transformed?.BoxCox is { } bc)
        {
            outcome.BoxCox["lambda"] = context.Results.Add(block.Id, "box_cox", null, null, null, "lambda", bc.Lambda, inputs);
            outcome.BoxCox["lambda_low"] = context.Results.Add(block.Id, "box_cox", null, null, null, "lambda_low", bc.LambdaLow, inputs);
            outcome.BoxCox["lambda_high"] = context.Results.Add(block.Id, "box_cox", null, null, null, "lambda_high", bc.LambdaHigh, inputs);
        }

        AddMeans(context, block, outcome, inputs);
        if (data.Factors.Count == 1)
        {
            OneFactorChecks(context, block, outcome, options, inputs);
        }

        AddCautions(context, block, outcome, data, options);
        if (context.Header.Report.Figures)
        {
            var shape = data.Factors.Count == 1 ? Figures.Means(data, context.Header.Alpha) : Figures.Interaction(outcome);
            if (shape is not null)
            {
                outcome.Figures.Add(shape);
            }

            outcome.Figures.AddRange(Figures.FDistributions(outcome).Take(data.Factors.Count == 1 ? 1 : 3));
        }

        return outcome;
    }

    /// <summary>
    /// Records an ANOVA table in the manifest: per term SS, df, MS, F, p, critical F, effect sizes
    /// and the (1 − alpha) interval of partial eta²; residual SS, df, MS; total SS, df. Shared by
    /// fits on loaded rows and on database cell summaries, so both write the same vocabulary.
    /// </summary>
    internal static void RecordTable(
        EvaluationContext context,
        BoundBlock block,
        IReadOnlyList<AnovaTerm> terms,
        double ssResidual,
        int dfResidual,
        Quantity msResidual,
        double ssTotal,
        int dfTotal,
        IReadOnlyList<string> inputs,
        List<(AnovaTerm Term, Dictionary<string, ResultValue> Values)> termValues,
        Dictionary<string, ResultValue> residual,
        Dictionary<string, ResultValue> total)
    {
        foreach (var t in terms)
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
            var ci = EffectSizeIntervals.PartialEtaSquared(t.F, t.Df, dfResidual, 1 - context.Header.Alpha);
            Add("partial_eta2_ci_low", ci.PartialEtaSquaredLow);
            Add("partial_eta2_ci_high", ci.PartialEtaSquaredHigh);
            termValues.Add((t, values));
        }

        residual["ss"] = context.Results.Add(block.Id, "anova", "residual", null, null, "ss", ssResidual, inputs);
        residual["df"] = context.Results.Add(block.Id, "anova", "residual", null, null, "df", dfResidual, inputs);
        residual["ms"] = context.Results.Add(block.Id, "anova", "residual", null, null, "ms", msResidual, inputs);
        total["ss"] = context.Results.Add(block.Id, "anova", "total", null, null, "ss", ssTotal, inputs);
        total["df"] = context.Results.Add(block.Id, "anova", "total", null, null, "df", dfTotal, inputs);
    }

    private static string DataDisplay(EvaluationContext context, BlockData data) =>
        context.DataDisplayPaths.TryGetValue(data.Dataset.Spec.Name, out var p) ? p : data.Dataset.Path;

    private static string NeedText(TransformKind kind) => kind switch
    {
        TransformKind.Sqrt => "non-negative",
        TransformKind.Reciprocal => "non-zero",
        _ => "positive",
    };

    private static void AddMeans(EvaluationContext context, BoundBlock block, Outcome outcome, IReadOnlyList<string> inputs)
    {
        var means = AnovaMeans.Compute(outcome.Input!);
        foreach (var fm in means.Factors)
        {
            foreach (var lm in fm.Levels)
            {
                var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    ["n"] = context.Results.Add(block.Id, "means", fm.Factor, lm.Level, null, "n", lm.Count, inputs),
                    ["mean"] = context.Results.Add(block.Id, "means", fm.Factor, lm.Level, null, "mean", Back(outcome, lm.RawMean), inputs),
                };
                if (outcome.Input!.Factors.Count > 1)
                {
                    values["ls_mean"] = context.Results.Add(block.Id, "means", fm.Factor, lm.Level, null, "ls_mean", Back(outcome, lm.LeastSquaresMean), inputs);
                }

                outcome.Means.Add((fm.Factor, lm.Level, values));
            }
        }
    }

    /// <summary>A mean on the model scale (centred), back on the response's own scale.</summary>
    private static Quantity Back(Outcome outcome, Quantity centredMean)
    {
        if (!centredMean.IsDefined)
        {
            return centredMean;
        }

        var m = centredMean.Value + outcome.ResponseCentre;
        return outcome.Transformed is { } t ? ResponseTransform.BackTransformMean(m, t) : Quantity.Of(m);
    }

    private static void OneFactorChecks(EvaluationContext context, BoundBlock block, Outcome outcome, Options options, IReadOnlyList<string> inputs)
    {
        var factor = outcome.Data!.Factors[0];
        var groups = factor.Split(outcome.Input!.Response);
        var alpha = context.Header.Alpha.ToString("R", CultureInfo.InvariantCulture);
        var showWelch = options.Welch == "yes";
        if (options.Welch == "yes")
        {
            outcome.Decisions.Add("Welch's F is shown because it was requested (welch: yes).");
        }
        else if (options.Welch == "auto")
        {
            var bf = outcome.Review.BrownForsythe;
            if (outcome.Review.UnequalVariances)
            {
                showWelch = true;
                outcome.ReadWelch = true;
                outcome.Decisions.Add($"Rule fired (welch: auto): the Brown–Forsythe test found unequal group variances (p = {P(bf.P)} < α = {alpha}), so Welch's F, which does not assume equal variances, is shown and is the test to read.");
            }
            else
            {
                outcome.Decisions.Add(bf.P.IsDefined
                    ? $"Welch's F is not shown (welch: auto): the Brown–Forsythe test found no evidence of unequal variances (p = {P(bf.P)} ≥ α = {alpha}). Set 'welch: yes' to show it anyway."
                    : $"Welch's F is not shown (welch: auto): the rule did not fire because equal variances could not be checked (Brown–Forsythe: {bf.P.Reason}).");
            }

            if (outcome.Review.WantsRankTest)
            {
                var kw = KruskalWallis.Test(groups);
                outcome.Ranks = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    ["h"] = context.Results.Add(block.Id, "kruskal_wallis", factor.Spec.Name, null, null, "h", kw.H, inputs),
                    ["df"] = context.Results.Add(block.Id, "kruskal_wallis", factor.Spec.Name, null, null, "df", kw.Df, inputs),
                    ["p"] = context.Results.Add(block.Id, "kruskal_wallis", factor.Spec.Name, null, null, "p", kw.P, inputs),
                };
                outcome.Decisions.Add(string.Create(CultureInfo.InvariantCulture, $"Rule fired (welch: auto): the residuals depart from normality (Shapiro–Wilk p = {P(outcome.Review.Normality.P)} < α = {alpha}) and the smallest group has only {outcome.Review.SmallestGroup} observations (fewer than {AssumptionReview.SmallGroup}), so the Kruskal–Wallis rank test, which does not assume normality, is shown as well."));
            }
        }

        if (showWelch)
        {
            var w = WelchAnova.Test(groups);
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void AddW(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, "welch", factor.Spec.Name, null, null, stat, q, inputs);
            AddW("f", w.F);
            AddW("df1", Quantity.Of(w.Df1));
            AddW("df2", w.Df2);
            AddW("p", w.P);
            outcome.Welch = values;
        }
    }

    private static string P(Quantity p) => !p.IsDefined ? "not defined" : p.Value < 0.001 ? "< 0.001" : p.Value.ToString("F3", CultureInfo.InvariantCulture);

    private static void AddCautions(EvaluationContext context, BoundBlock block, Outcome outcome, BlockData data, Options options)
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
            outcome.Warnings.Add($"Small group(s) (fewer than 5 observations): {string.Join(", ", small.Select(StudyPress.Charts.BidiText.Isolate))}. The test has little power to detect differences, and normality and equal variances cannot be judged well from so few values.");
        }

        var unbalanced = cells.Select(c => c.Values.Length).Distinct().Count() > 1;
        if (unbalanced && data.Factors.Count > 1)
        {
            outcome.Warnings.Add(options.Interaction
                ? "The design is unbalanced and includes interactions: the sums of squares depend on the SS type, and a main effect is hard to interpret on its own when its factor interacts with another."
                : "The design is unbalanced: the sums of squares depend on the SS type chosen.");
        }

        if (data.DroppedMissing > 0)
        {
            outcome.Notes.Add(string.Create(CultureInfo.InvariantCulture, $"{data.DroppedMissing} row(s) with a missing value were left out of this analysis."));
        }

        var empty = SummaryKind.EmptyGroups(context, block, data);
        if (empty.Count > 0)
        {
            outcome.Notes.Add($"Group(s) without any observed response ({string.Join(", ", empty)}): every response is missing, so they are not part of this analysis, its comparisons or its figures.");
        }
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        if (outcome is AggregatedAnova.Outcome aggregated)
        {
            AggregatedAnova.Render(html, aggregated, context);
            return;
        }

        var o = (Outcome)outcome;
        if (o.Result is null || o.Data is null)
        {
            return;
        }

        var responseText = o.Transformed is null ? o.Data.ResponseName : TransformLabel(o) + " of " + o.Data.ResponseName;
        var caption = o.Block.Caption ?? $"Analysis of variance of {responseText}";
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

        if (o.Transformed is { } tr)
        {
            html.Raw("<p class=\"method\">").Text(TransformText(tr)).Raw("</p>");
        }

        var effects = new HtmlTable("effects", "Critical F and effect sizes", ["Term", "F crit (α = " + context.AlphaText + ")", "η²", "partial η²", context.ConfidenceText + "% CI of partial η²", "ω²", "Cohen's f"]);
        foreach (var (term, v) in o.Terms)
        {
            effects.Row(Label(term, o), [V(v, "f_crit"), V(v, "eta2"), V(v, "partial_eta2"), V(v, "partial_eta2_ci_low") + " – " + V(v, "partial_eta2_ci_high"), V(v, "omega2"), V(v, "cohen_f")]);
        }

        effects.WriteTo(html);
        RenderMeans(html, o, context);

        if (o.Welch is { } w)
        {
            var welch = new HtmlTable("welch", "Welch's test (unequal variances allowed)", ["Source", "F", "df1", "df2", "p"]);
            welch.Row(Label(o.Terms[0].Term, o), [V(w, "f"), V(w, "df1"), V(w, "df2"), V(w, "p")]);
            welch.WriteTo(html);
        }

        if (o.Ranks is { } r)
        {
            var ranks = new HtmlTable("ranks", "Kruskal–Wallis rank test (normality not assumed)", ["Source", "H", "df", "p"]);
            ranks.Row(Label(o.Terms[0].Term, o), [V(r, "h"), V(r, "df"), V(r, "p")]);
            ranks.WriteTo(html);
        }

        html.Raw("<div class=\"reading\">");
        foreach (var d in o.Decisions)
        {
            html.Raw("<p class=\"decision\">").Text(d).Raw("</p>");
        }

        foreach (var (term, v) in o.Terms)
        {
            html.Raw("<p>").Raw(Interpret(term, v, o, context)).Raw("</p>");
        }

        html.Raw("</div>");
        string V(Dictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    private static void RenderMeans(HtmlWriter html, Outcome o, RenderContext context)
    {
        var factorial = o.Input!.Factors.Count > 1;
        var meanName = o.Transformed is null ? "Mean" : "Back-transformed mean";
        string[] headers = factorial ? ["Level", "n", meanName, "least-squares " + meanName.ToLowerInvariant()] : ["Level", "n", meanName];
        var table = new HtmlTable("means", "Level means" + (o.Transformed is null ? string.Empty : " (back-transformed to the original scale)"), headers);
        foreach (var (factor, level, v) in o.Means)
        {
            var label = factorial ? StudyPress.Charts.BidiText.Isolate(o.Data!.Factors.First(f => f.Spec.Name == factor).Spec.Display) + ": " + StudyPress.Charts.BidiText.Isolate(level) : level;
            List<string> cells = [HtmlWriter.ValueHtml(v["n"], context), HtmlWriter.ValueHtml(v["mean"], context)];
            if (factorial)
            {
                cells.Add(HtmlWriter.ValueHtml(v["ls_mean"], context));
            }

            table.Row(label, cells);
        }

        table.WriteTo(html);
    }

    private static string TransformLabel(Outcome o) => ((Options)o.Block.Options!).TransformName switch
    {
        "log" => "ln",
        "box-cox" => "Box–Cox transform",
        var n => n,
    };

    private static string TransformText(TransformedResponse t)
    {
        var what = t.Kind switch
        {
            TransformKind.Log => "natural logarithm, ln y",
            TransformKind.Log10 => "common logarithm, log10 y",
            TransformKind.Sqrt => "square root, √y",
            TransformKind.Reciprocal => "reciprocal, 1/y",
            _ => string.Create(CultureInfo.InvariantCulture, $"Box–Cox power (y^λ − 1)/λ with the maximum-likelihood λ = {t.BoxCox!.Lambda:0.###}")
                + (t.BoxCox!.LambdaLow.IsDefined && t.BoxCox.LambdaHigh.IsDefined
                    ? string.Create(CultureInfo.InvariantCulture, $" ({t.BoxCox.ConfidenceLevel * 100:0.#}% profile-likelihood interval {t.BoxCox.LambdaLow.Value:0.###} to {t.BoxCox.LambdaHigh.Value:0.###})")
                    : string.Empty)
                + (t.BoxCox.AtBound ? "; the maximum lies at the edge of the searched range [−3, 3], so the data may need a different treatment" : string.Empty),
        };
        return $"The response was transformed before the analysis ({what}). Sums of squares are on the transformed scale; the level means are shown back-transformed ({t.BackTransformedMean}).";
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
        var response = HtmlWriter.Escape(o.Data!.ResponseName);
        var what = isInteraction
            ? $"the effect of one of {label} on {response} depends on the level of the other"
            : $"the mean {response} differs between at least two levels of {label}";
        var caveat = o.ReadWelch && !isInteraction
            ? " Because the variances differ, rely on Welch's test below rather than on this F."
            : string.Empty;
        return term.P.Value < context.Alpha
            ? $"{label}: at α = {context.AlphaText} the test rejects the hypothesis of no effect ({stat}); the data indicate that {what}. It does not say which levels differ or whether the difference matters in practice; see the effect sizes and, for pairs, a post-hoc comparison.{caveat}"
            : $"{label}: at α = {context.AlphaText} the test does not reject the hypothesis of no effect ({stat}). This is not evidence that there is no effect: a real difference may be too small for this design to detect.{caveat}";
    }

    internal static string PText(ResultValue p, RenderContext context)
    {
        var html = HtmlWriter.ValueHtml(p, context);
        if (!p.Value.IsDefined)
        {
            return html;
        }

        var shown = context.Format.Format("p", p.Value.Value);
        return shown.StartsWith('<') ? html : "= " + html;
    }
}
