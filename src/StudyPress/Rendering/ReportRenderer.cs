using StudyPress.Charts;
using System.Globalization;
using System.Reflection;
using System.Security.Cryptography;
using System.Text;
using Markdig;
using Markdig.Renderers;
using Markdig.Renderers.Html;
using Scriban;
using Scriban.Runtime;
using StudyPress.Binding;
using StudyPress.Data;
using StudyPress.Evaluation;
using StudyPress.Syntax;
using StudyPress.Evaluation.Kinds;
using StudyPress.Rendering.Kinds;

namespace StudyPress.Rendering;

/// <summary>The report's page shell and assets, embedded from templates/ at build time.</summary>
public static class ReportTemplate
{
    /// <summary>The name a report's manifest records for its page template: ours, not the template file's.</summary>
    public const string Name = "studypress-report";

    /// <summary>The page shell's file in templates/.</summary>
    private const string ShellFile = "report.sbn-html";

    public static string Shell { get; } = Read(ShellFile);

    public static string Css { get; } = Read("report.css");

    public static string Script { get; } = Read("report.js");

    /// <summary>SHA-256 over the shell, stylesheet and script: what a report records as its template.</summary>
    public static string Sha256 { get; } = ContentHash.Hex(Encoding.UTF8.GetBytes(Shell + "\0" + Css + "\0" + Script));

    private static readonly Lazy<Template> Parsed = new(() =>
    {
        var t = Template.Parse(Shell, ShellFile);
        if (t.HasErrors)
        {
            throw new InvalidOperationException("the embedded report template does not parse: " + string.Join("; ", t.Messages));
        }

        return t;
    });

    public static Template Template => Parsed.Value;

    private static string Read(string name)
    {
        using var s = typeof(ReportTemplate).Assembly.GetManifestResourceStream("StudyPress.Templates." + name)
            ?? throw new InvalidOperationException("missing embedded template " + name);
        using var r = new StreamReader(s, Encoding.UTF8);
        return r.ReadToEnd().Replace("\r\n", "\n", StringComparison.Ordinal);
    }
}

/// <summary>
/// Stage 4: prose through Markdig's HTML renderer (analysis blocks and references by our own
/// renderers), the page shell through Scriban with strict variables, fed only pre-escaped
/// fragments. User prose is never evaluated as a template.
/// </summary>
internal static class ReportRenderer
{
    public static string Render(
        StudySyntax syntax,
        StudyHeader header,
        IReadOnlyDictionary<AnalysisBlockSyntax, BlockOutcome> outcomes,
        IReadOnlyDictionary<BlockOutcome, IReadOnlyList<Figure>> figures,
        IReadOnlyDictionary<ReferenceInline, ResolvedReference> references,
        IReadOnlyList<LoadedDataset> inputs,
        ManifestHeader identity,
        byte[] manifest)
    {
        var context = new RenderContext(new NumberFormat(header.Report.Numbers), header.Alpha);
        using var numbers = NumberFormat.Use(context.Format);
        // Sized for the charts (about 10,000 characters each) and the prose, so that the page is
        // written into one buffer rather than a chain of small blocks (docs/performance.md,
        // "Start-up after Main (round 9)"); a larger page simply grows it.
        var body = new StringWriter(new StringBuilder(16_384 + (12_288 * figures.Values.Sum(f => f.Count))), CultureInfo.InvariantCulture);
        var renderer = new HtmlRenderer(body);
        StudyParser.Pipeline(syntax.Path).Setup(renderer);
        renderer.ObjectRenderers.Insert(0, new AnalysisBlockRenderer(outcomes, figures, context, body));
        renderer.ObjectRenderers.Insert(0, new ReferenceRenderer(references, context));
        if (header.Report.RawHtml)
        {
            renderer.ObjectRenderers.Insert(0, new FilteredHtmlBlockRenderer());
            renderer.ObjectRenderers.Insert(0, new FilteredHtmlInlineRenderer());
        }

        renderer.Render(syntax.Document);
        renderer.Writer.Flush();

        var manifestText = Encoding.UTF8.GetString(manifest).TrimEnd('\n');
        var model = new ScriptObject
        {
            ["csp"] = ContentSecurityPolicy,
            ["tool_version"] = HtmlWriter.Escape(identity.ToolVersion),
            ["title"] = HtmlWriter.Escape(header.Title),
            ["authors"] = header.Authors.Count == 0 ? string.Empty : "<p class=\"study-authors\">" + HtmlWriter.Escape(string.Join(", ", header.Authors)) + "</p>",
            // The id is shown when it says more than the file name (the default id).
            ["study_id"] = header.Id == Path.GetFileNameWithoutExtension(identity.StudyPath) ? string.Empty : "Study <code>" + HtmlWriter.Escape(header.Id) + "</code> · ",
            ["study_path"] = HtmlWriter.Escape(identity.StudyPath),
            ["study_sha"] = identity.StudySha256,
            ["build_time"] = identity.BuildTime is null ? string.Empty : " on " + HtmlWriter.Escape(identity.BuildTime),
            ["body"] = body.ToString(),
            ["inputs"] = InputsTable(inputs),
            ["caution"] = Caution(),
            ["manifest"] = manifestText,
            ["css"] = Style,
            ["js"] = ReportTemplate.Script,
        };
        // No built-in functions: the shell uses none, and Scriban's default set is built by
        // reflection over some two hundred methods on first use (about a tenth of a small study's
        // time in the native build; docs/performance.md, "Start-up").
        var tc = new TemplateContext(new ScriptObject())
        {
            StrictVariables = true,
            EnableRelaxedMemberAccess = false,
            EnableRelaxedIndexerAccess = false,
            EnableRelaxedTargetAccess = false,
            EnableRelaxedFunctionAccess = false,

            // No size limit: the fragments are already bounded by the data limits (rows, levels,
            // blocks, study size; docs/limits.md), and Scriban's default (1 MiB per value and for
            // the whole output) silently truncated larger reports. Should a limit ever be set,
            // exceeding it must fail, never cut.
            LimitToString = 0,
            OutputLimit = 0,
            OnStringLimit = ScriptLimitBehavior.Throw,
            OnOutputLimit = ScriptLimitBehavior.Throw,

            // The shell has no loops, functions or nested objects (only strings are pushed); these
            // stay small and explicit so that a template change that needs more fails loudly.
            LoopLimit = 1000,
            LoopLimitQueryable = 1000,
            RecursiveLimit = 100,
            ObjectRecursionLimit = 20,
        };
        tc.PushGlobal(model);

        // The page is the shell's text with the values in it: at most this long, written into one buffer.
        var length = ReportTemplate.Shell.Length;
        foreach (var value in model.Values)
        {
            length += (value as string)?.Length ?? 0;
        }

        tc.PushOutput(new StringBuilderOutput(new StringBuilder(length)));
        return ReportTemplate.Template.Render(tc);
    }

    /// <summary>The page's stylesheet: the chart font's face and templates/report.css.</summary>
    internal static string Style { get; } = StudyPress.Charts.ChartFont.CssFontFace() + "\n" + ReportTemplate.Css;

    /// <summary>The Content Security Policy every report carries: only the tool's own style and script, by hash.</summary>
    public static string ContentSecurityPolicy { get; } =
        "default-src 'none'; style-src '" + Hash(Style) + "'; script-src '" + Hash(ReportTemplate.Script) + "'; img-src data:; font-src data:; base-uri 'none'; form-action 'none'";

    internal static string Hash(string inline) => "sha256-" + Convert.ToBase64String(ContentHash.Of(Encoding.UTF8.GetBytes(inline)));

    private static string InputsTable(IReadOnlyList<LoadedDataset> inputs)
    {
        var html = new HtmlWriter();
        html.Raw("<div class=\"table-wrap\"><table class=\"inputs\"><caption>Input files (the hashes identify the exact bytes analysed)</caption><thead><tr>")
            .Raw("<th scope=\"col\">Dataset</th><th scope=\"col\" class=\"text\">Path</th><th scope=\"col\" class=\"text\">SHA-256</th><th scope=\"col\">Rows read</th><th scope=\"col\">Rows used</th></tr></thead><tbody>");
        foreach (var d in inputs)
        {
            html.Raw("<tr><th scope=\"row\">").Text(d.Spec.Name).Raw("</th><td class=\"text\"><code>").Text(d.Path).Raw("</code></td><td class=\"text\"><code class=\"hash\">").Text(d.Sha256)
                .Raw("</code></td><td>").Raw(InputNumber(d, "rows", d.Rows)).Raw("</td><td>").Raw(InputNumber(d, "rowsUsed", d.RowsUsed)).Raw("</td></tr>");
        }

        html.Raw("</tbody></table></div>");
        foreach (var d in inputs.Where(d => d.Query is not null || d.SourceNote is not null))
        {
            html.Raw("<p class=\"method\">").Text(d.Spec.Name + ": ");
            if (d.Query is not null)
            {
                html.Text("rows from the query ").Raw("<code>").Text(d.Query).Raw("</code>").Text(", result SHA-256 ").Raw("<code class=\"hash\">").Text(d.ResultSha256 ?? string.Empty).Raw("</code>. ");
            }

            html.Text(d.SourceNote ?? string.Empty).Raw("</p>");
        }

        var dropped = inputs.Where(d => d.RowsUsed < d.Rows).ToList();
        foreach (var d in dropped)
        {
            html.Raw("<p class=\"method\">").Text(string.Create(CultureInfo.InvariantCulture, $"{d.Spec.Name}: {NumberText.Count(d.Rows - d.RowsUsed, "row")} {(d.Rows - d.RowsUsed == 1 ? "was" : "were")} not used by any analysis (missing values, or outside every block's 'where' filter)."))
                .Raw("</p>");
        }

        return html.ToString();
    }

    /// <summary>A row count of an input, traced to its manifest input entry (data-input, data-field).</summary>
    private static string InputNumber(LoadedDataset d, string field, int value) =>
        "<span class=\"v\" data-input=\"" + HtmlWriter.Escape(d.Spec.Name) + "\" data-field=\"" + field + "\" tabindex=\"0\">" + value.ToString(CultureInfo.InvariantCulture) + "</span>";

    private static string Caution() =>
        "<p>The tests and intervals here are computed from the data as given, under the assumptions each one states. "
        + "They help weigh evidence; they do not replace judgement about the design, the measurements and what a difference means in your field. "
        + "A small p-value is not a large or important effect, and a large p-value does not show that there is no effect.</p>"
        + "<p>Where these results inform clinical, safety, environmental or regulatory decisions, follow that field's reporting standards and have the analysis reviewed by a qualified person.</p>";

    /// <summary>
    /// An analysis block's section. Its charts are written straight into the page's writer
    /// (<paramref name="body"/>), not built as strings and copied through the block's HTML: the SVG is
    /// most of a small report, and those copies were most of its allocation.
    /// </summary>
    private sealed class AnalysisBlockRenderer(IReadOnlyDictionary<AnalysisBlockSyntax, BlockOutcome> outcomes, IReadOnlyDictionary<BlockOutcome, IReadOnlyList<Figure>> figures, RenderContext context, StringWriter body)
        : HtmlObjectRenderer<AnalysisBlockSyntax>
    {
        protected override void Write(HtmlRenderer renderer, AnalysisBlockSyntax obj)
        {
            if (!outcomes.TryGetValue(obj, out var outcome))
            {
                return;
            }

            var html = new HtmlWriter();
            html.Raw("<section class=\"block block-").Raw(outcome.Block.Kind.Name).Raw("\" id=\"block-").Text(outcome.Block.Id).Raw("\">");
            html.Raw("<p class=\"block-title\">").Text(outcome.Block.Kind.Name + " · " + outcome.Block.Id).Raw("</p>");
            var kind = KindRenderers.For(outcome);
            kind.Render(html, outcome, context);
            foreach (var figure in figures[outcome])
            {
                html.Raw("<figure class=\"chart chart-").Raw(figure.Type).Raw("\">");
                if (ReferenceEquals(renderer.Writer, body))
                {
                    // What is written so far goes through the renderer (its line state), the chart after it straight into the page.
                    renderer.Write(html.ToString());
                    figure.Chart.WriteSvg(body.GetStringBuilder());
                    html = new HtmlWriter();
                }
                else
                {
                    html.Raw(figure.Chart.ToSvg());
                }

                html.Raw("<figcaption>").Text(figure.Caption).Raw("</figcaption></figure>");
            }

            var warnings = kind.Warnings(outcome, context).ToList();
            if (warnings.Count > 0)
            {
                html.Raw("<div class=\"warnings\">");
                foreach (var w in warnings)
                {
                    html.Raw("<p>").Text(w).Raw("</p>");
                }

                html.Raw("</div>");
            }

            var notes = kind.Notes(outcome, context).ToList();
            if (notes.Count > 0)
            {
                html.Raw("<div class=\"notes\">");
                foreach (var n in notes)
                {
                    html.Raw("<p>").Text(n).Raw("</p>");
                }

                html.Raw("</div>");
            }

            html.Raw("</section>\n");
            renderer.Write(html.ToString());
        }
    }

    /// <summary>Raw HTML blocks of a study with <c>raw-html: true</c>, through <see cref="RawHtmlFilter"/>.</summary>
    private sealed class FilteredHtmlBlockRenderer : HtmlObjectRenderer<Markdig.Syntax.HtmlBlock>
    {
        protected override void Write(HtmlRenderer renderer, Markdig.Syntax.HtmlBlock obj)
        {
            renderer.Write(RawHtmlFilter.Filter(obj.Lines.ToString())).WriteLine();
        }
    }

    /// <summary>Raw inline tags of a study with <c>raw-html: true</c>, through <see cref="RawHtmlFilter"/>.</summary>
    private sealed class FilteredHtmlInlineRenderer : HtmlObjectRenderer<Markdig.Syntax.Inlines.HtmlInline>
    {
        protected override void Write(HtmlRenderer renderer, Markdig.Syntax.Inlines.HtmlInline obj)
        {
            renderer.Write(RawHtmlFilter.Filter(obj.Tag));
        }
    }

    /// <summary>A prose reference: a traced number, styled when the reference gives formatting words; a p-value with its phrase.</summary>
    private sealed class ReferenceRenderer(IReadOnlyDictionary<ReferenceInline, ResolvedReference> references, RenderContext context)
        : HtmlObjectRenderer<ReferenceInline>
    {
        protected override void Write(HtmlRenderer renderer, ReferenceInline obj)
        {
            if (references.TryGetValue(obj, out var v))
            {
                renderer.Write(v.ToHtml(context));
            }
        }
    }
}
