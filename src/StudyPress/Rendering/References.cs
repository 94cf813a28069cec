using System.Text;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

using StudyPress.Evaluation;

namespace StudyPress.Rendering;

/// <summary>
/// Prose references: <c>[=block.part.part.stat]</c> and the formatting words after commas
/// (<see cref="ReferenceGrammar"/> reads them). The first part names a block, the last a
/// statistic; the parts between pick the value by any of its manifest components in order
/// (test, term, level, pair). When several values match, the block's main test wins
/// (<c>[=main.dose.f]</c> is the ANOVA F, not Welch's). A p-value reads as a phrase on its own
/// ("p = 0.014", "p &lt; 0.001") unless the reference says <c>number only</c>.
/// </summary>
public static class References
{
    /// <summary>The canonical way to write a reference to a value.</summary>
    public static string PathOf(ResultValue v) =>
        string.Join(".", new[] { v.Block }.Concat(v.Components()).Append(v.Stat).Select(ReferenceGrammar.QuoteIfNeeded));

    /// <summary>
    /// Reports the references that cannot be read or name no block (one message each; a block that
    /// failed to parse is already reported) and returns them, to be left out of resolution.
    /// </summary>
    public static HashSet<ReferenceInline> CheckTargets(StudySyntax syntax, IReadOnlyDictionary<string, string> primaryTests, DiagnosticBag diagnostics)
    {
        var reported = new HashSet<ReferenceInline>();
        foreach (var r in syntax.References.Where(r => r.Closed))
        {
            var parts = r.Expression?.Parts;
            if (parts is null)
            {
                diagnostics.BadReferenceSyntax(r.Location, r.Text, r.SyntaxError!);
                reported.Add(r);
            }
            else if (!primaryTests.ContainsKey(parts[0]))
            {
                if (!syntax.Blocks.Any(b => b.Id == parts[0]) && !syntax.FailedIds.Contains(parts[0]))
                {
                    diagnostics.UnknownBlockReference(r.Location, parts[0], DiagnosticBag.Nearest(parts[0], primaryTests.Keys));
                }

                reported.Add(r);
            }
        }

        return reported;
    }

    /// <summary>Resolves every reference not already reported; a value that is not defined is an error at its reference.</summary>
    public static Dictionary<ReferenceInline, ResolvedReference> ResolveAll(StudySyntax syntax, IReadOnlySet<ReferenceInline> reported, ResultSet results, IReadOnlyDictionary<string, string> primaryTests, double alpha, DiagnosticBag diagnostics)
    {
        var resolved = new Dictionary<ReferenceInline, ResolvedReference>();
        foreach (var r in syntax.References.Where(r => r.Closed && !reported.Contains(r)))
        {
            if (Resolve(r, results, primaryTests, alpha, diagnostics) is { } v)
            {
                if (!v.Value.Value.IsDefined)
                {
                    diagnostics.UndefinedReference(r.Location, r.Text, v.Value.Value.Reason!);
                }

                resolved[r] = v;
            }
        }

        return resolved;
    }

    /// <summary>Resolves a reference against the values; reports and returns null on failure.</summary>
    public static ResolvedReference? Resolve(ReferenceInline reference, ResultSet results, IReadOnlyDictionary<string, string> primaryTests, double alpha, DiagnosticBag diagnostics)
    {
        var expression = reference.Expression;
        if (expression is null)
        {
            diagnostics.BadReferenceSyntax(reference.Location, reference.Text, reference.SyntaxError!);
            return null;
        }

        var parts = expression.Parts;
        var block = parts[0];
        if (!primaryTests.TryGetValue(block, out var primary))
        {
            diagnostics.UnknownBlockReference(reference.Location, block, DiagnosticBag.Nearest(block, primaryTests.Keys));
            return null;
        }

        if (expression.Words.FirstOrDefault(w => w.Kind == FormatWord.Unknown) is { } unknown)
        {
            diagnostics.UnknownReferenceFunction(reference.Location, unknown.Text, NearestWord(unknown.Text), ReferenceGrammar.WordForms);
            return null;
        }

        if (expression.IsResult)
        {
            return ResolveResult(reference, expression, results, primary, alpha, diagnostics);
        }

        var formatting = expression.Words.Where(w => w.Kind != FormatWord.NumberOnly).ToList();
        if (formatting.Count > 0 && NotAValue(parts, results) is { } what)
        {
            diagnostics.FunctionOnNonValue(reference.Location, formatting[0].Text, expression.WordsText, string.Join(".", parts.Select(ReferenceGrammar.QuoteIfNeeded)), what, Example(parts, results));
            return null;
        }

        var value = ResolveValue(reference, parts, results, primary, diagnostics);
        return value is null ? null : Format(reference, expression, value, diagnostics);
    }

    /// <summary>The nearest formatting word to a misspelt one ("2 digits" → "2 decimals").</summary>
    private static string? NearestWord(string written)
    {
        var space = written.IndexOf(' ', StringComparison.Ordinal);
        if (space > 0 && written[..space].All(char.IsAsciiDigit))
        {
            // A count with another unit ('2 digits', '3 places'): the count stays, the unit is 'decimals'.
            return written[..space] + (written[..space] == "1" ? " decimal" : " decimals");
        }

        return DiagnosticBag.Nearest(written, ReferenceGrammar.WordForms.Where(w => !w.StartsWith('N')));
    }

    /// <summary>The style of one value from the words; p-values become a phrase ("p = 0.014") unless 'number only'.</summary>
    private static ResolvedReference? Format(ReferenceInline reference, ReferenceExpression expression, ResultValue value, DiagnosticBag diagnostics)
    {
        var words = expression.Words;
        bool Has(FormatWord k) => words.Any(w => w.Kind == k);
        int? decimals = words.FirstOrDefault(w => w.Kind == FormatWord.Decimals)?.Decimals;
        if (PName(value.Stat) is { } name)
        {
            if (words.FirstOrDefault(w => w.Kind is FormatWord.AsPercent or FormatWord.AsDf) is { } notForP)
            {
                diagnostics.BadReferenceFunction(reference.Location, notForP.Text, $"'{value.Stat}' is a p-value; it is shown as one, with 'N decimals' or 'no leading zero' if you wish");
                return null;
            }

            if (decimals == 0)
            {
                diagnostics.BadReferenceFunction(reference.Location, "0 decimals", "a p-value needs at least one decimal");
                return null;
            }

            var pStyle = decimals is { } pd
                ? (Has(FormatWord.NoLeadingZero) ? ReportStyle.PFraction(pd) : ReportStyle.PFixed(pd))
                : Has(FormatWord.NoLeadingZero) ? ReportStyle.P : null;
            return new ResolvedReference(value, null, pStyle) { PName = Has(FormatWord.NumberOnly) ? null : name };
        }

        var style = Has(FormatWord.AsDf) ? ReportStyle.Df
            : Has(FormatWord.AsPercent) ? ReportStyle.Percent(decimals ?? 0)
            : Has(FormatWord.NoLeadingZero) ? ReportStyle.Fraction(decimals ?? 2)
            : decimals is { } d ? ReportStyle.Fixed(d)
            : null;
        return new ResolvedReference(value, null, style);
    }

    /// <summary>The name a p-value statistic is given in its phrase ("p", "adjusted p"), or null when the statistic is not a p-value.</summary>
    private static string? PName(string stat) => stat switch
    {
        Stat.P => "p",
        Stat.PAdj => "adjusted p",
        Stat.PBonferroni => "Bonferroni-adjusted p",
        _ => null,
    };

    /// <summary>A path without a statistic, naming one group of values (a term, a pair, a level), as a result sentence.</summary>
    private static ResolvedReference? ResolveResult(ReferenceInline reference, ReferenceExpression expression, ResultSet results, string primary, double alpha, DiagnosticBag diagnostics)
    {
        var parts = expression.Parts;
        var block = parts[0];
        var middle = parts.Skip(1).ToArray();
        var ofBlock = results.Values.Where(v => v.Block == block).ToList();
        var groups = new List<ResultValue>();
        foreach (var v in ofBlock.Where(v => IsSubsequence(middle, [.. v.Components()])))
        {
            if (!groups.Any(g => Sentences.SameGroup(g, v)))
            {
                groups.Add(v);
            }
        }

        if (groups.Count > 1)
        {
            var exact = groups.Where(g => g.Components().SequenceEqual(middle, StringComparer.Ordinal)).ToList();
            var preferred = exact.Count > 0 ? exact : groups.Where(g => g.Test == primary).ToList();
            if (preferred.Count > 0)
            {
                groups = preferred;
            }
        }

        if (groups.Count == 0)
        {
            // Candidates with and without the test name, so 'main.groop' finds 'main.group'.
            var suggestion = DiagnosticBag.Nearest(
                string.Join(".", parts),
                ofBlock.SelectMany(v => new[]
                {
                    string.Join(".", new[] { v.Block }.Concat(v.Components().Skip(1)).Select(ReferenceGrammar.QuoteIfNeeded)),
                    string.Join(".", new[] { v.Block }.Concat(v.Components()).Select(ReferenceGrammar.QuoteIfNeeded)),
                }).Distinct());
            diagnostics.UnknownReference(reference.Location, reference.Text, suggestion is null ? null : suggestion + ", result");
            return null;
        }

        if (groups.Count > 1)
        {
            diagnostics.AmbiguousReference(reference.Location, reference.Text, groups.Take(4).Select(g => string.Join(".", new[] { g.Block }.Concat(g.Components()).Select(ReferenceGrammar.QuoteIfNeeded)) + ", result"));
            return null;
        }

        var html = Sentences.Result(results, groups[0], alpha, out var why);
        if (html is null)
        {
            diagnostics.BadReferenceFunction(reference.Location, "result", why!);
            return null;
        }

        var members = Sentences.Group(results, groups[0]).Values;
        var anchor = members.FirstOrDefault(v => !v.Value.IsDefined) ?? groups[0];
        return new ResolvedReference(anchor, html, null);
    }

    /// <summary>"a block" or "a term" when a formatting word is applied to a path that names no single value; else null.</summary>
    private static string? NotAValue(IReadOnlyList<string> parts, ResultSet results)
    {
        if (parts.Count == 1)
        {
            return "a block";
        }

        var last = parts[^1];
        var ofBlock = results.Values.Where(v => v.Block == parts[0]);
        return ofBlock.Any(v => v.Stat == last) || !ofBlock.Any(v => v.Term == last || v.Level == last || v.Test == last)
            ? null
            : ofBlock.Any(v => v.Term == last) ? "a term" : ofBlock.Any(v => v.Level == last) ? "a level" : "a test";
    }

    /// <summary>A value path that starts like <paramref name="parts"/>, to show as an example.</summary>
    private static string? Example(IReadOnlyList<string> parts, ResultSet results)
    {
        var prefix = parts.Skip(1).ToList();
        return results.Values
            .Where(v => v.Block == parts[0])
            .Where(v => prefix.Count == 0 || v.Term == prefix[^1] || v.Level == prefix[^1] || v.Test == prefix[^1])
            .Select(PathOf)
            .FirstOrDefault();
    }

    private static ResultValue? ResolveValue(ReferenceInline reference, IReadOnlyList<string> parts, ResultSet results, string primary, DiagnosticBag diagnostics)
    {
        if (parts.Count < 2)
        {
            diagnostics.BadReferenceSyntax(reference.Location, reference.Text, "name a block and a statistic, for example [=main.dose.f]");
            return null;
        }

        var block = parts[0];
        var stat = parts[^1];
        var middle = parts.Skip(1).Take(parts.Count - 2).ToArray();
        var ofBlock = results.Values.Where(v => v.Block == block).ToList();
        var matches = ofBlock.Where(v => v.Stat == stat && IsSubsequence(middle, [.. v.Components()])).ToList();
        if (matches.Count > 1)
        {
            var primaryMatches = matches.Where(v => v.Test == primary).ToList();
            if (primaryMatches.Count > 0)
            {
                matches = primaryMatches;
            }
        }

        if (matches.Count == 1)
        {
            return matches[0];
        }

        if (matches.Count > 1)
        {
            diagnostics.AmbiguousReference(reference.Location, reference.Text, matches.Take(4).Select(PathOf));
            return null;
        }

        // Suggest: the same parts with the nearest statistic of the values they select, else the
        // nearest full path of the block.
        var selected = ofBlock.Where(v => IsSubsequence(middle, [.. v.Components()])).Select(v => v.Stat).Distinct().ToList();
        var nearStat = selected.Where(s => stat.StartsWith(s, StringComparison.Ordinal) || s.StartsWith(stat, StringComparison.Ordinal)).OrderByDescending(s => s.Length).FirstOrDefault()
            ?? DiagnosticBag.Nearest(stat, selected);
        var pathText = string.Join(".", parts.Select(ReferenceGrammar.QuoteIfNeeded));
        if (selected.Count == 0 && middle.Length > 0 && Folded(block, middle, stat, ofBlock) is { } folded)
        {
            // A test whose values are now statistics of another row (iman_davenport.f became
            // friedman's f_iman_davenport): the path without that part, with the statistic named after it.
            diagnostics.UnknownReference(reference.Location, reference.Text, folded);
            return null;
        }

        if (selected.Count == 0 && middle.Length > 0)
        {
            // A misspelt term or level: correct each unknown part to the nearest one of the block.
            var components = ofBlock.SelectMany(v => v.Components()).Distinct().ToList();
            var corrected = middle.Select(m => components.Contains(m) ? m : DiagnosticBag.Nearest(m, components) ?? m).ToArray();
            var fixedStats = ofBlock.Where(v => IsSubsequence(corrected, [.. v.Components()])).Select(v => v.Stat).Distinct().ToList();
            var fixedStat = fixedStats.Contains(stat) ? stat : DiagnosticBag.Nearest(stat, fixedStats);
            if (!corrected.SequenceEqual(middle) && fixedStat is not null)
            {
                diagnostics.UnknownReference(reference.Location, reference.Text, string.Join(".", new[] { block }.Concat(corrected).Append(fixedStat).Select(ReferenceGrammar.QuoteIfNeeded)));
                return null;
            }
        }

        var suggestion = nearStat is not null && middle.Length > 0
            ? string.Join(".", parts.Take(parts.Count - 1).Append(nearStat).Select(ReferenceGrammar.QuoteIfNeeded))
            : DiagnosticBag.Nearest(pathText.Replace(" ", string.Empty, StringComparison.Ordinal), ofBlock.Select(PathOf));
        diagnostics.UnknownReference(reference.Location, reference.Text, suggestion);
        return null;
    }

    /// <summary>
    /// The path that names <paramref name="stat"/> of an unknown part X as the statistic
    /// <c>stat_X</c> of the values the other parts select, when the block has it; else null.
    /// </summary>
    private static string? Folded(string block, string[] middle, string stat, List<ResultValue> ofBlock)
    {
        var components = ofBlock.SelectMany(v => v.Components()).ToHashSet(StringComparer.Ordinal);
        for (var i = 0; i < middle.Length; i++)
        {
            if (components.Contains(middle[i]))
            {
                continue;
            }

            var name = stat + "_" + middle[i];
            var rest = middle.Where((_, j) => j != i).ToArray();
            if (ofBlock.Any(v => v.Stat == name && IsSubsequence(rest, [.. v.Components()])))
            {
                return string.Join(".", new[] { block }.Concat(rest).Append(name).Select(ReferenceGrammar.QuoteIfNeeded));
            }
        }

        return null;
    }

    private static bool IsSubsequence(string[] wanted, string[] components)
    {
        var j = 0;
        foreach (var c in components)
        {
            if (j < wanted.Length && wanted[j] == c)
            {
                j++;
            }
        }

        return j == wanted.Length;
    }
}

/// <summary>
/// A resolved reference: the value it names (for a result sentence, the group's first undefined
/// value, else its first value), and either ready HTML (a sentence), a report style, or neither
/// (the report's default number format). A p-value carries the name of its phrase
/// (<see cref="PName"/>: "p", "adjusted p"), written before the number with "=" or, when the
/// number already starts with "&lt;", a space: "p = 0.014", "p &lt; 0.001".
/// </summary>
public sealed record ResolvedReference(ResultValue Value, string? Html, string? Style)
{
    public string? PName { get; init; }

    public string ToHtml(RenderContext context)
    {
        if (Html is not null)
        {
            return Html;
        }

        var number = Style is { } style ? ReportStyle.Span(Value, style) : HtmlWriter.ValueHtml(Value, context);
        if (PName is null)
        {
            return number;
        }

        var shown = !Value.Value.IsDefined ? "n/d"
            : Style is { } s ? ReportStyle.Format(s, Value.Value.Value)!
            : context.Format.Format(Value.Stat, Value.Value.Value);
        return PName + (Value.Value.IsDefined && !shown.StartsWith('<') ? " = " : " ") + number;
    }
}
