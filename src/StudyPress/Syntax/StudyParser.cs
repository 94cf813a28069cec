using Markdig;
using Markdig.Extensions.Yaml;
using Markdig.Syntax;
using StudyPress.Diagnostics;

namespace StudyPress.Syntax;

/// <summary>
/// Stage 1: splits the header from the body, reads the header YAML with positions shifted to the
/// study file, parses the body with one Markdig pipeline and recognises analysis blocks by the
/// first word of a fenced block's info string.
/// </summary>
public static class StudyParser
{
    /// <summary>The header switch that lets raw HTML in prose through (off by default): <c>report: {raw-html: true}</c>.</summary>
    public const string RawHtmlKey = "raw-html";

    /// <summary>Link schemes kept in prose links; any other scheme (javascript:, data:, vbscript:, ...) is dropped.</summary>
    private static readonly string[] SafeSchemes = ["http", "https", "mailto"];

    public static MarkdownPipeline Pipeline(string path, bool rawHtml = false)
    {
        var builder = new MarkdownPipelineBuilder()
            .UseYamlFrontMatter()
            .UsePipeTables()
            .UsePreciseSourceLocation();
        // Twice the study's own limit (checked on the parsed tree, StudyParser.TooDeepAt), so the
        // parser and the renderer never reach theirs on a study that passed.
        builder.MaximumNestingDepth = 2 * Data.DataLimits.MaxMarkdownDepth;
        if (!rawHtml)
        {
            builder.DisableHtml();
        }

        return builder.Use(new ReferenceExtension(path)).Build();
    }

    public static StudySyntax? Parse(string path, string text, IReadOnlySet<string> kinds, DiagnosticBag diagnostics)
    {
        // CommonMark and YAML both end a line at LF, CR or CRLF; so do our positions.
        text = HeaderSplit.NormaliseLineEnds(text);
        if (text.Trim().Length == 0)
        {
            diagnostics.EmptyStudy(new SourceLocation(path, 0, 0));
            return null;
        }

        if (HeaderSplit.Find(text, path, diagnostics) is not var (lines, end))
        {
            return null;
        }

        var headerText = string.Join('\n', lines[1..end]);
        var headerLocation = new SourceLocation(path, 1, 0);
        var headerNode = YamlReader.Read(headerText, path, 1, 0, diagnostics);
        YMapping? header = null;
        if (headerNode is YMapping m)
        {
            header = m;
        }
        else if (headerNode is not null)
        {
            diagnostics.ExpectedMapping(headerNode.Location, "the header");
        }
        else if (!diagnostics.HasErrors)
        {
            header = new YMapping([], headerLocation);
        }

        // Nesting is limited before parsing where a line shows it (its leading quote and list
        // markers, its indentation), so the parser never works through thousands of levels; the
        // parsed tree is checked after (inline nesting, unmatched delimiters); the parser's own limit
        // (twice as deep) is the last guard.
        var pipeline = Pipeline(path, RawHtmlRequested(header));
        var deepLine = FirstOverNestedLine(lines, Data.DataLimits.MaxMarkdownDepth);
        var checkedLines = deepLine < 0 ? lines : lines[..deepLine];
        var document = Parse(deepLine < 0 ? text : string.Join('\n', checkedLines), pipeline);
        var treeDeep = document is null ? -1 : TooDeepAt(document, Data.DataLimits.MaxMarkdownDepth);
        if (document is null || deepLine >= 0 || treeDeep >= 0)
        {
            var at = document is null ? FirstTooDeepLine(checkedLines, pipeline) : treeDeep >= 0 ? treeDeep : deepLine;
            diagnostics.MarkdownTooDeep(new SourceLocation(path, at, 0), Data.DataLimits.MaxMarkdownDepth);
            return null;
        }

        var blocks = new List<AnalysisBlockSyntax>();
        var failedIds = new HashSet<string>(StringComparer.Ordinal);
        ReplaceAnalysisBlocks(document, path, lines, kinds, blocks, failedIds, diagnostics);
        DropUnsafeLinks(document);

        var references = document.Descendants<ReferenceInline>().ToList();
        foreach (var r in references.Where(r => !r.Closed))
        {
            diagnostics.UnclosedReference(r.Location, ReferenceGrammar.MaxLength);
        }

        foreach (var old in document.Descendants<OldReferenceInline>())
        {
            diagnostics.OldReferenceForm(old.Location, old.Written, OldReferenceForm.Rewrite(old.Written[2..^2].Trim()));
        }

        // "[=main.dose.f]: text" at the start of a paragraph is a Markdown link definition, which
        // would make the line vanish from the report without a word.
        foreach (var definition in document.Descendants<Markdig.Syntax.LinkReferenceDefinition>().Where(d => d.Label?.StartsWith('=') == true))
        {
            diagnostics.ReferenceReadAsLinkDefinition(new SourceLocation(path, definition.Line, definition.Column), definition.Label!);
        }

        return new StudySyntax(path, text, header, headerLocation, document, blocks, references)
        {
            HeaderEnd = new SourceLocation(path, end, 0),
            FailedIds = failedIds,
        };
    }

    /// <summary>
    /// The first line whose start opens more than <paramref name="max"/> containers (block quote
    /// markers '>' and list markers '-', '*', '+', '1.', '1)') or is indented more than 4 columns per
    /// level allowed; -1 when none. A line of markers alone may be a thematic break and is not counted.
    /// </summary>
    internal static int FirstOverNestedLine(string[] lines, int max)
    {
        for (var n = 0; n < lines.Length; n++)
        {
            var line = lines[n];
            var levels = 0;
            var columns = 0;
            var i = 0;
            while (i < line.Length)
            {
                var ch = line[i];
                if (ch == ' ')
                {
                    columns++;
                    i++;
                }
                else if (ch == '\t')
                {
                    columns += 4 - (columns % 4);
                    i++;
                }
                else if (ch == '>')
                {
                    levels++;
                    columns++;
                    i++;
                }
                else if (ch is '-' or '*' or '+' && (i + 1 == line.Length || line[i + 1] is ' ' or '\t'))
                {
                    levels++;
                    columns++;
                    i++;
                }
                else if (char.IsAsciiDigit(ch))
                {
                    var j = i;
                    while (j < line.Length && j - i < 9 && char.IsAsciiDigit(line[j]))
                    {
                        j++;
                    }

                    if (j < line.Length && line[j] is '.' or ')' && (j + 1 == line.Length || line[j + 1] is ' ' or '\t'))
                    {
                        levels++;
                        columns += j + 1 - i;
                        i = j + 1;
                    }
                    else
                    {
                        break;
                    }
                }
                else
                {
                    break;
                }
            }

            if (i == line.Length && line.AsSpan().IndexOfAnyExcept(" \t-*+") < 0)
            {
                continue; // markers only: a thematic break or an empty item, not nesting worth refusing
            }

            if (levels > max || columns > 4 * max)
            {
                return n;
            }
        }

        return -1;
    }

    /// <summary>
    /// The 0-based line of the first element nested more than <paramref name="max"/> deep in the
    /// parsed tree (blocks and inlines, unmatched delimiters too); -1 when none. Walked with an
    /// explicit stack, not recursion.
    /// </summary>
    private static int TooDeepAt(MarkdownDocument document, int max)
    {
        var stack = new Stack<(Markdig.Syntax.MarkdownObject Node, int Depth)>();
        stack.Push((document, 0));
        while (stack.Count > 0)
        {
            var (node, depth) = stack.Pop();
            if (depth > max)
            {
                return Math.Max(0, node.Line);
            }

            switch (node)
            {
                case ContainerBlock container:
                    foreach (var child in container)
                    {
                        stack.Push((child, depth + 1));
                    }

                    break;
                case LeafBlock { Inline: { } inline }:
                    stack.Push((inline, depth + 1));
                    break;
                case Markdig.Syntax.Inlines.ContainerInline inlines:
                    for (var child = inlines.FirstChild; child is not null; child = child.NextSibling)
                    {
                        stack.Push((child, depth + 1));
                    }

                    break;
            }
        }

        return -1;
    }

    /// <summary>The parsed document, or null when its nesting passes the pipeline's limit (Markdig then throws).</summary>
    private static MarkdownDocument? Parse(string text, MarkdownPipeline pipeline)
    {
        try
        {
            return Markdown.Parse(text, pipeline);
        }
        catch (ArgumentException e) when (e.Message.Contains("nested", StringComparison.OrdinalIgnoreCase))
        {
            return null;
        }
    }

    /// <summary>
    /// The 0-based line at which the text first nests too deeply: the shortest run of leading
    /// lines that fails to parse ends there (binary search; a few parses, only on this error path).
    /// </summary>
    private static int FirstTooDeepLine(string[] lines, MarkdownPipeline pipeline)
    {
        var ok = 0;
        var fails = lines.Length;
        while (fails - ok > 1)
        {
            var mid = ok + ((fails - ok) / 2);
            if (Parse(string.Join('\n', lines, 0, mid), pipeline) is not { } d || TooDeepAt(d, Data.DataLimits.MaxMarkdownDepth) >= 0)
            {
                fails = mid;
            }
            else
            {
                ok = mid;
            }
        }

        return fails - 1;
    }

    private static void ReplaceAnalysisBlocks(ContainerBlock container, string path, string[] lines, IReadOnlySet<string> kinds, List<AnalysisBlockSyntax> found, HashSet<string> failedIds, DiagnosticBag diagnostics)
    {
        for (var i = 0; i < container.Count; i++)
        {
            var block = container[i];
            if (block is ContainerBlock inner)
            {
                ReplaceAnalysisBlocks(inner, path, lines, kinds, found, failedIds, diagnostics);
                continue;
            }

            if (block is not FencedCodeBlock fenced || block is YamlFrontMatterBlock)
            {
                continue;
            }

            var kind = fenced.Info ?? string.Empty;
            var args = (fenced.Arguments ?? string.Empty).Trim();
            var id = args.Length == 0 ? null : args.Split(' ', StringSplitOptions.RemoveEmptyEntries)[0];
            if (!kinds.Contains(kind))
            {
                if (NearMissKind(kind, id, kinds) is { } meant)
                {
                    // A misspelt kind would otherwise make an ordinary code block, and every block
                    // and reference naming its id would fail: one message here, and its id is
                    // remembered so that later stages stay quiet about it.
                    diagnostics.UnknownKind(new SourceLocation(path, fenced.Line, fenced.Column + fenced.OpeningFencedCharCount), kind, meant);
                    if (id is not null)
                    {
                        failedIds.Add(id);
                    }
                }

                continue;
            }

            var swallowed = SwallowedFences(fenced);
            if (fenced.ClosingFencedCharCount == 0 || swallowed is not null)
            {
                // CommonMark runs an unclosed fence to the end of the file (or to the next bare
                // fence line), swallowing the prose and the blocks in between.
                diagnostics.UnclosedBlock(new SourceLocation(path, fenced.Line, fenced.Column), kind);
                failedIds.UnionWith(swallowed ?? []);
                if (id is not null)
                {
                    failedIds.Add(id);
                }

                continue;
            }
            var location = new SourceLocation(path, fenced.Line, fenced.Column);
            var idColumn = id is null ? fenced.Column : IdColumn(lines[fenced.Line], kind, id, fenced.Column);
            var bodyText = fenced.Lines.ToString();
            YMapping? body = null;
            if (bodyText.Trim().Length > 0)
            {
                var node = YamlReader.Read(bodyText, path, fenced.Line + 1, 0, diagnostics);
                if (node is YMapping bm)
                {
                    body = bm;
                }
                else if (node is YScalar { IsNull: true })
                {
                    body = new YMapping([], location);
                }
                else if (node is not null)
                {
                    diagnostics.ExpectedMapping(node.Location, $"the body of the {kind} block");
                }
            }
            else
            {
                body = new YMapping([], location);
            }

            var replacement = new AnalysisBlockSyntax(kind, id, body, location, new SourceLocation(path, fenced.Line, idColumn))
            {
                Line = fenced.Line,
                Column = fenced.Column,
                Span = fenced.Span,
            };
            container[i] = replacement;
            found.Add(replacement);
        }
    }

    /// <summary>
    /// The kind a fenced block's info string was probably meant to be: close to a kind name (or the
    /// same but for case) and written the way analysis blocks are (with an id after it).
    /// </summary>
    private static string? NearMissKind(string info, string? id, IReadOnlySet<string> kinds)
    {
        if (info.Length == 0 || id is null || !info.All(c => char.IsAsciiLetter(c) || c == '-'))
        {
            return null;
        }

        return DiagnosticBag.Nearest(info, kinds);
    }

    /// <summary>
    /// The ids of fenced blocks opened inside an analysis block's body (a fence with an info
    /// string): a sign that the block's own closing fence is missing and a later bare fence closed
    /// it instead. Null when there is none.
    /// </summary>
    private static List<string>? SwallowedFences(FencedCodeBlock fenced)
    {
        var fence = new string(fenced.FencedChar, fenced.OpeningFencedCharCount);
        List<string>? ids = null;
        for (var i = 0; i < fenced.Lines.Count; i++)
        {
            var t = fenced.Lines.Lines[i].Slice.ToString().TrimStart();
            var info = t.StartsWith(fence, StringComparison.Ordinal) ? t.TrimStart(fenced.FencedChar).Trim() : string.Empty;
            if (info.Length > 0)
            {
                ids ??= [];
                var words = info.Split(' ', StringSplitOptions.RemoveEmptyEntries);
                if (words.Length > 1)
                {
                    ids.Add(words[1]);
                }
            }
        }

        return ids;
    }

    /// <summary>Whether the header asks for raw HTML (the binder checks the key's value and reports mistakes).</summary>
    private static bool RawHtmlRequested(YMapping? header) =>
        header?["report"] is YMapping report && report[RawHtmlKey] is YScalar { Value: "true" or "True" or "yes" };

    /// <summary>Replaces the target of any prose link whose scheme could run code with '#'.</summary>
    private static void DropUnsafeLinks(MarkdownDocument document)
    {
        foreach (var link in document.Descendants<Markdig.Syntax.Inlines.LinkInline>())
        {
            if (!IsSafeUrl(link.Url))
            {
                link.Url = "#";
            }
        }

        foreach (var link in document.Descendants<Markdig.Syntax.Inlines.AutolinkInline>())
        {
            if (!link.IsEmail && !IsSafeUrl(link.Url))
            {
                link.Url = "#";
            }
        }
    }

    internal static bool IsSafeUrl(string? url)
    {
        if (string.IsNullOrEmpty(url))
        {
            return true;
        }

        // Browsers ignore ASCII whitespace and control characters inside a scheme ("java\tscript:").
        var cleaned = new string([.. url.Where(c => c > ' ' && c != '\u007F')]);
        var colon = cleaned.IndexOf(':', StringComparison.Ordinal);
        if (colon < 0)
        {
            return true;
        }

        var scheme = cleaned[..colon];
        if (scheme.IndexOfAny(['/', '?', '#']) >= 0)
        {
            return true; // a relative path or fragment that contains a colon later
        }

        return SafeSchemes.Contains(scheme.ToLowerInvariant());
    }

    private static int IdColumn(string infoLine, string kind, string id, int fallback)
    {
        var k = infoLine.IndexOf(kind, StringComparison.Ordinal);
        var at = k < 0 ? -1 : infoLine.IndexOf(id, k + kind.Length, StringComparison.Ordinal);
        return at < 0 ? fallback : at;
    }
}

internal sealed class ReferenceExtension(string path) : IMarkdownExtension
{
    public void Setup(MarkdownPipelineBuilder pipeline)
    {
        if (!pipeline.InlineParsers.Contains<ReferenceInlineParser>())
        {
            pipeline.InlineParsers.Insert(0, new ReferenceInlineParser(path));
        }
    }

    public void Setup(MarkdownPipeline pipeline, Markdig.Renderers.IMarkdownRenderer renderer)
    {
    }
}
