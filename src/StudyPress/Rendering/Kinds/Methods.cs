using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation.Kinds;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics;
using StudyPress.Syntax;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>methods</c> blocks.</summary>
public sealed class MethodsRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new MethodsRenderer());

    public override string Kind => "methods";

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (MethodsOutcome)outcome;
        var options = o.Block.OptionsOf<MethodsKind.Options>();
        var text = new MethodsText(o, options);
        foreach (var (css, paragraph) in text.Paragraphs())
        {
            html.Raw("<p class=\"methods-").Raw(css).Raw("\">").Raw(paragraph).Raw("</p>");
        }
    }
}

/// <summary>
/// Composes the methods text from the sentences each covered block's renderer contributes
/// (<see cref="KindRenderer.Methods"/>), part by part in a fixed order: per anova section the
/// methods (design, model, assumptions, decisions, comparisons) then the results; then results of
/// blocks outside a section, the software and data, and the cautions.
/// </summary>
internal sealed class MethodsText(MethodsOutcome o, MethodsKind.Options options)
{
    private static readonly MethodsPart[] MethodParts = [MethodsPart.Design, MethodsPart.Model, MethodsPart.Assumptions, MethodsPart.Decisions, MethodsPart.Comparisons];

    private readonly MethodsWriter w = new(o, options);

    private IEnumerable<string> From(MethodsPart part, MethodsSection? section, BlockOutcome block) => KindRenderers.For(block).Methods(part, section, block, w);

    public IEnumerable<(string Css, string Html)> Paragraphs()
    {
        var many = o.Sections.Count > 1;
        var first = true;
        var paragraphs = new List<(string Css, string Html)>();
        var lastMethods = -1;
        foreach (var s in o.Sections)
        {
            var methods = new List<string>();

            // The long form opens with α; the brief form states it with the model (or here, when
            // the model is not written but results are).
            if (first && (w.Brief ? !w.Has("model") && w.Has("effects") : w.Has("model") || w.Has("effects")))
            {
                methods.Add($"Every test {w.T("used", "uses")} the significance level α = {w.AlphaText}, and intervals are {w.Confidence}% intervals.");
            }

            if (first && o.Summaries.Count > 0 && !w.Brief)
            {
                methods.AddRange(From(MethodsPart.Descriptives, null, o.Summaries[0]));
            }

            var blocks = new List<BlockOutcome> { s.Anova };
            if (s.Checks is not null)
            {
                blocks.Add(s.Checks);
            }

            blocks.AddRange(s.PostHocs);
            foreach (var part in MethodParts)
            {
                methods.AddRange(blocks.SelectMany(b => From(part, s, b)));
                if (part == MethodsPart.Design && first && o.Summaries.Count > 0 && w.Brief)
                {
                    // Brief: the design first, then that descriptive statistics were computed.
                    methods.AddRange(From(MethodsPart.Descriptives, null, o.Summaries[0]));
                }
            }

            first = false;
            var label = many ? "<span class=\"methods-of\">" + MethodsWriter.E(s.Anova.Block.Caption ?? s.Anova.Block.Id) + ".</span> " : string.Empty;
            if (methods.Count > 0)
            {
                lastMethods = paragraphs.Count;
                paragraphs.Add(("methods", label + string.Join(" ", methods)));
            }

            var results = Followers(s).SelectMany(b => From(MethodsPart.Results, s, b)).ToList();
            if (results.Count > 0)
            {
                paragraphs.Add(("results", (methods.Count == 0 ? label : string.Empty) + string.Join(" ", results)));
            }
        }

        var other = new List<string>();
        if (o.Sections.Count == 0 && o.Summaries.Count > 0)
        {
            other.AddRange(From(MethodsPart.Descriptives, null, o.Summaries[0]));
        }

        other.AddRange(o.Ranks.Concat<BlockOutcome>(o.Powers).Concat(o.Others).SelectMany(b => From(MethodsPart.Results, null, b)));
        if (other.Count > 0)
        {
            paragraphs.Add(("results", string.Join(" ", other)));
        }

        if (w.Has("software"))
        {
            if (w.Brief && lastMethods >= 0)
            {
                // Brief: software and data close the methods paragraph, as in a paper.
                paragraphs[lastMethods] = (paragraphs[lastMethods].Css, paragraphs[lastMethods].Html + " " + Software());
            }
            else
            {
                paragraphs.Add(("software", Software()));
            }
        }

        if (w.Has("cautions"))
        {
            var cautions = o.Sections.SelectMany(s => Followers(s).SelectMany(b => From(MethodsPart.Cautions, s, b))).ToList();
            cautions.Add("Statistical significance is not practical importance: whether a difference of the size estimated matters is a judgement for the field, and the intervals show which sizes remain compatible with the data. The reporting standards of the field apply.");
            paragraphs.Add(("cautions", string.Join(" ", cautions)));
        }

        return paragraphs;
    }

    /// <summary>A section's anova and the blocks that follow from it, in the order their results are told.</summary>
    private static IEnumerable<BlockOutcome> Followers(MethodsSection s) => new BlockOutcome[] { s.Anova }.Concat(s.PostHocs).Concat(s.Powers);

    /// <summary>The first characters of a SHA-256 the text shows; the full hash is in the report's table of inputs.</summary>
    internal const int ShortHash = 12;

    private string Software()
    {
        var inputs = w.Outcome.Inputs.Select(i =>
        {
            var hash = $"SHA-256 <code class=\"hash\">{MethodsWriter.E(i.Dataset.Sha256[..Math.Min(ShortHash, i.Dataset.Sha256.Length)])}…</code>";
            var all = i.Rows.Value.IsDefined && i.RowsUsed.Value.IsDefined && i.Rows.Value.Value == i.RowsUsed.Value.Value;
            var unit = i.Dataset.Aggregated ? "cells" : "rows";
            var counts = all
                ? (i.Dataset.Aggregated ? $"aggregated by the database into {MethodsWriter.Df(i.Rows)} cells" : $"{MethodsWriter.Df(i.Rows)} rows")
                : (i.Dataset.Aggregated
                    ? $"aggregated by the database into {MethodsWriter.Df(i.Rows)} cells, {MethodsWriter.Df(i.RowsUsed)} of them analysed"
                    : $"{MethodsWriter.Df(i.Rows)} {unit} read, {MethodsWriter.Df(i.RowsUsed)} analysed");
            return $"<code>{MethodsWriter.E(i.Dataset.Path)}</code> ({counts}; {hash})";
        });
        var text = w.Did("the analysis", false, "run", "ran", "run", $" with StudyPress <code>{MethodsWriter.E(Rendering.Tool.Version)}</code>");
        text += w.Outcome.Inputs.Count == 0 ? "." : $" on {MethodsWriter.List(inputs)}.";
        return w.Brief ? text : text + " The report's embedded manifest records every value with the file it came from, and this text is regenerated from those values on each build.";
    }
}
