using System.Globalization;
using System.Text;

namespace StudyPress.Rendering.Export;

/// <summary>
/// The report as a LaTeX fragment to <c>\input</c> (<c>build --latex DIR</c>). The fragment only
/// defines macros (it typesets nothing where it is read): one per manifest value, named by
/// <see cref="LatexNames"/> and showing the value as the report's tables do; each table of the
/// report as a booktabs <c>tabular</c> whose numbers are those macros, with its caption in a
/// second macro; each figure as an <c>\includegraphics</c> of its PNG file beside the fragment,
/// found wherever the fragment is read from (LaTeX's <c>\CurrentFilePath</c>); and the methods
/// block's paragraphs. It needs <c>booktabs</c> and <c>graphicx</c>. Deterministic: the same
/// report gives the same bytes.
/// </summary>
public static class LatexWriter
{
    /// <summary>The fragment's file name inside its folder.</summary>
    public const string FragmentName = "results.tex";

    /// <param name="figureFiles">Each figure's PNG file name (beside the fragment), in the report's figure order.</param>
    public static string Write(ReportDocument report, ManifestValues manifest, NumberFormat format, IReadOnlyList<string> figureFiles)
    {
        var names = new LatexNames();
        var sb = new StringBuilder();
        sb.Append("% Results of the study ").Append(Comment(manifest.StudyPath)).Append(" (SHA-256 ").Append(manifest.StudySha256).Append("),\n");
        sb.Append("% written by studypress ").Append(Comment(manifest.ToolVersion)).Append(". Generated: rebuild it rather than edit it.\n");
        sb.Append("% \\input it after \\usepackage{booktabs} and \\usepackage{graphicx}. It defines macros and typesets nothing.\n");
        sb.Append("% Each value macro is followed by a comment with its manifest id, its path and its full-precision value.\n");
        sb.Append('\n');

        var macroOf = new Dictionary<string, string>(StringComparer.Ordinal);
        var textOf = new Dictionary<string, string>(StringComparer.Ordinal);
        sb.Append("% Values\n");
        foreach (var v in manifest.Values)
        {
            var name = names.ForValue(v);
            var text = v.Value is { } d ? format.Format(v.Stat, d) : "n/d";
            macroOf[v.Id] = name;
            textOf[v.Id] = text;
            sb.Append("\\newcommand\\").Append(name).Append('{').Append(Escape(text)).Append("}% ").Append(v.Id).Append(' ').Append(Comment(v.Path))
                .Append(v.Value is { } full ? " = " + ManifestValues.RoundTrip(full) : " not defined: " + Comment(v.Reason ?? string.Empty)).Append('\n');
        }

        var inline = new Inline(macroOf, textOf);

        // Figures are found beside this file, wherever it is \input from.
        sb.Append("\n% Figures: PNG files beside this fragment\n");
        sb.Append("\\edef\\spFragmentDir{\\ifdefined\\CurrentFilePath\\CurrentFilePath\\fi}%\n");
        sb.Append("\\edef\\spFragmentDir{\\ifx\\spFragmentDir\\empty\\else\\spFragmentDir/\\fi}%\n");
        foreach (var f in report.Blocks.OfType<ExportFigure>())
        {
            if (f.Index >= figureFiles.Count)
            {
                throw new InvalidOperationException("the report shows more figures than the compilation produced");
            }

            var name = names.TakeWithCaption(f.Block, f.Type, "figure");
            sb.Append("\\newcommand\\").Append(name).Append("{}\\edef\\").Append(name)
                .Append("{\\noexpand\\includegraphics[width=\\noexpand\\linewidth]{\\spFragmentDir ").Append(figureFiles[f.Index]).Append("}}\n");
            sb.Append("\\newcommand\\").Append(name).Append("Caption{").Append(inline.Render(f.Caption)).Append("}\n");
        }

        sb.Append("\n% Tables (booktabs)\n");
        foreach (var t in report.Blocks.OfType<ExportTable>())
        {
            var name = names.TakeWithCaption(t.Block ?? (t.Kind == "inputs" ? null : "report"), t.Kind, "table");
            sb.Append("\\newcommand\\").Append(name).Append("Caption{").Append(inline.Render(t.Caption)).Append("}\n");
            sb.Append("\\newcommand\\").Append(name).Append("{%\n");
            Table(sb, t, inline);
            sb.Append("}\n");
        }

        sb.Append("\n% Methods and results text\n");
        foreach (var p in report.Blocks.OfType<ExportParagraph>().Where(p => p.Role == ParagraphRole.MethodsText))
        {
            var kind = p.Source is { } s && s.StartsWith("methods-", StringComparison.Ordinal) ? s["methods-".Length..] : "methods";
            var name = names.Take(p.Block, kind, "text");
            sb.Append("\\newcommand\\").Append(name).Append("{%\n").Append(inline.Render(p.Content)).Append("}\n");
        }

        return sb.ToString();
    }

    private static void Table(StringBuilder sb, ExportTable t, Inline inline)
    {
        var columns = Math.Max(1, t.Columns);
        var spec = new StringBuilder();
        for (var c = 0; c < columns; c++)
        {
            // A column of numbers is set flush right, one with words flush left.
            var words = c == 0 || t.Rows.Where(r => !r.Header).Any(r => CellAt(r, c) is { } cell && !IsNumeric(cell.Content) && cell.Content.Count > 0);
            spec.Append(words ? 'l' : 'r');
        }

        sb.Append("\\begin{tabular}{").Append(spec).Append("}\n\\toprule\n");
        var headerDone = false;
        foreach (var row in t.Rows)
        {
            if (!row.Header && !headerDone)
            {
                if (t.Rows.Any(r => r.Header))
                {
                    sb.Append("\\midrule\n");
                }

                headerDone = true;
            }

            var used = 0;
            var cells = new List<string>();
            foreach (var cell in row.Cells)
            {
                var text = inline.Render(cell.Content);
                cells.Add(cell.Span > 1 ? "\\multicolumn{" + cell.Span.ToString(CultureInfo.InvariantCulture) + "}{l}{" + text + "}" : text);
                used += cell.Span;
            }

            for (; used < columns; used++)
            {
                cells.Add(string.Empty);
            }

            sb.Append(string.Join(" & ", cells)).Append(" \\\\\n");
        }

        sb.Append("\\bottomrule\n\\end{tabular}%\n");
    }

    private static ExportCell? CellAt(ExportRow row, int column)
    {
        var at = 0;
        foreach (var c in row.Cells)
        {
            if (column < at + c.Span)
            {
                return c;
            }

            at += c.Span;
        }

        return null;
    }

    private static bool IsNumeric(IReadOnlyList<ExportInline> content) =>
        content.OfType<NumberRun>().Any() && content.OfType<TextRun>().All(t => t.Text.All(c => !char.IsLetter(c)) || t.Text.Trim() is "to");

    /// <summary>Writes paragraph content: a number the report shows as its table form is its value macro; a number a reference styled is its text.</summary>
    private sealed class Inline(Dictionary<string, string> macroOf, Dictionary<string, string> textOf)
    {
        public string Render(IReadOnlyList<ExportInline> content)
        {
            var sb = new StringBuilder();
            foreach (var item in content)
            {
                switch (item)
                {
                    case TextRun t:
                        sb.Append(Styled(Escape(t.Text), t.Style));
                        break;
                    case NumberRun n when !n.Styled && macroOf.TryGetValue(n.Id, out var macro) && textOf[n.Id] == n.Text:
                        sb.Append(Styled("\\" + macro + "{}", n.Style));
                        break;
                    case NumberRun n:
                        sb.Append(Styled(Escape(n.Text), n.Style));
                        break;
                    case LineBreakRun:
                        sb.Append("\\newline{}");
                        break;
                }
            }

            return sb.ToString();
        }

        private static string Styled(string tex, RunStyle style)
        {
            if (style.HasFlag(RunStyle.Code))
            {
                tex = "\\texttt{" + tex + "}";
            }

            if (style.HasFlag(RunStyle.Bold))
            {
                tex = "\\textbf{" + tex + "}";
            }

            if (style.HasFlag(RunStyle.Italic))
            {
                tex = "\\emph{" + tex + "}";
            }

            if (style.HasFlag(RunStyle.Superscript))
            {
                tex = "\\textsuperscript{" + tex + "}";
            }

            if (style.HasFlag(RunStyle.Subscript))
            {
                tex = "\\textsubscript{" + tex + "}";
            }

            return tex;
        }
    }

    /// <summary>Text for a one-line comment: line ends and controls become spaces.</summary>
    private static string Comment(string text) => new(text.Select(c => char.IsControl(c) || c is '\u2028' or '\u2029' ? ' ' : c).ToArray());

    /// <summary>
    /// Text as LaTeX: the special characters escaped, a minus sign or hyphen before a digit as a
    /// math minus, the symbols the report uses (Greek letters, ², ±, ×, √, ≥, dashes, µ …) as
    /// LaTeX commands, directional isolates dropped. Other characters are written as they are:
    /// pdflatex typesets Latin letters with accents; other scripts need lualatex or xelatex.
    /// </summary>
    public static string Escape(string text)
    {
        var sb = new StringBuilder(text.Length + 16);
        for (var i = 0; i < text.Length; i++)
        {
            var c = text[i];
            var next = i + 1 < text.Length ? text[i + 1] : '\0';
            var prev = i > 0 ? text[i - 1] : '\0';
            switch (c)
            {
                case '\\': sb.Append("\\textbackslash{}"); break;
                case '{': sb.Append("\\{"); break;
                case '}': sb.Append("\\}"); break;
                case '$': sb.Append("\\$"); break;
                case '&': sb.Append("\\&"); break;
                case '#': sb.Append("\\#"); break;
                case '%': sb.Append("\\%"); break;
                case '_': sb.Append("\\_"); break;
                case '~': sb.Append("\\textasciitilde{}"); break;
                case '^': sb.Append("\\textasciicircum{}"); break;
                case '<': sb.Append("\\textless{}"); break;
                case '>': sb.Append("\\textgreater{}"); break;
                case '|': sb.Append("\\textbar{}"); break;
                case '"': sb.Append("''"); break;
                case '\u2212': sb.Append("\\ensuremath{-}"); break;
                case '-' when char.IsAsciiDigit(next) && !char.IsAsciiLetterOrDigit(prev): sb.Append("\\ensuremath{-}"); break;
                case '-': sb.Append(next == '-' ? "-{}" : "-"); break;
                case '\'' or '`': sb.Append(c).Append(next is '\'' or '`' ? "{}" : string.Empty); break;
                case '\u2013': sb.Append("--"); break;
                case '\u2014': sb.Append("---"); break;
                case '\u00A0': sb.Append('~'); break;
                case '\u2009' or '\u202F': sb.Append("\\,"); break;
                case '\u2068' or '\u2069' or '\u2066' or '\u2067' or '\u200E' or '\u200F': break;
                case '\n' or '\r' or '\t': sb.Append(' '); break;
                default:
                    if (Symbols.TryGetValue(c, out var symbol))
                    {
                        sb.Append(symbol);
                    }
                    else if (char.IsControl(c))
                    {
                        sb.Append(' ');
                    }
                    else
                    {
                        sb.Append(c);
                    }

                    break;
            }
        }

        return sb.ToString();
    }

    private static readonly Dictionary<char, string> Symbols = new()
    {
        ['α'] = "\\ensuremath{\\alpha}", ['β'] = "\\ensuremath{\\beta}", ['γ'] = "\\ensuremath{\\gamma}", ['δ'] = "\\ensuremath{\\delta}",
        ['ε'] = "\\ensuremath{\\varepsilon}", ['ζ'] = "\\ensuremath{\\zeta}", ['η'] = "\\ensuremath{\\eta}", ['θ'] = "\\ensuremath{\\theta}",
        ['κ'] = "\\ensuremath{\\kappa}", ['λ'] = "\\ensuremath{\\lambda}", ['μ'] = "\\ensuremath{\\mu}", ['µ'] = "\\ensuremath{\\mu}",
        ['ν'] = "\\ensuremath{\\nu}", ['ξ'] = "\\ensuremath{\\xi}", ['π'] = "\\ensuremath{\\pi}", ['ρ'] = "\\ensuremath{\\rho}",
        ['σ'] = "\\ensuremath{\\sigma}", ['τ'] = "\\ensuremath{\\tau}", ['φ'] = "\\ensuremath{\\phi}", ['χ'] = "\\ensuremath{\\chi}",
        ['ψ'] = "\\ensuremath{\\psi}", ['ω'] = "\\ensuremath{\\omega}", ['Δ'] = "\\ensuremath{\\Delta}", ['Σ'] = "\\ensuremath{\\Sigma}",
        ['Λ'] = "\\ensuremath{\\Lambda}", ['Ω'] = "\\ensuremath{\\Omega}", ['Φ'] = "\\ensuremath{\\Phi}", ['Χ'] = "\\ensuremath{X}",
        ['²'] = "\\textsuperscript{2}", ['³'] = "\\textsuperscript{3}", ['¹'] = "\\textsuperscript{1}",
        ['±'] = "\\ensuremath{\\pm}", ['×'] = "\\ensuremath{\\times}", ['÷'] = "\\ensuremath{\\div}", ['·'] = "\\ensuremath{\\cdot}",
        ['√'] = "\\ensuremath{\\surd}", ['≥'] = "\\ensuremath{\\geq}", ['≤'] = "\\ensuremath{\\leq}", ['≠'] = "\\ensuremath{\\neq}",
        ['≈'] = "\\ensuremath{\\approx}", ['∞'] = "\\ensuremath{\\infty}", ['→'] = "\\ensuremath{\\rightarrow}", ['←'] = "\\ensuremath{\\leftarrow}",
        ['′'] = "\\ensuremath{'}", ['″'] = "\\ensuremath{''}", ['°'] = "\\ensuremath{^\\circ}", ['…'] = "\\dots{}",
        ['‘'] = "`", ['’'] = "'", ['“'] = "``", ['”'] = "''", ['•'] = "\\textbullet{}", ['§'] = "\\S{}", ['¶'] = "\\P{}",
        ['€'] = "\\texteuro{}", ['£'] = "\\pounds{}", ['©'] = "\\copyright{}", ['®'] = "\\textregistered{}", ['™'] = "\\texttrademark{}",
        ['ˆ'] = "\\textasciicircum{}", ['‰'] = "\\textperthousand{}",
    };
}
