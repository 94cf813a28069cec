using System.Text;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

using StudyPress.Evaluation;

namespace StudyPress.Rendering;

/// <summary>
/// Prose references: <c>{{ block.part.part.stat }}</c>. The first part names a block, the last a
/// statistic; the parts between pick the value by any of its manifest components in order
/// (test, term, level, pair). A part is a name (letters, digits, '_', '-') or a quoted string for
/// level names with spaces or dots: <c>{{ desc."Nozzle A".mean }}</c>. When several values match,
/// the block's main test wins (<c>{{ main.dose.f }}</c> is the ANOVA F, not Welch's).
/// Limits: 200 characters and 8 parts per reference, so a reference cannot make the build work hard.
/// </summary>
public static class References
{
    /// <summary>The canonical way to write a reference to a value.</summary>
    public static string PathOf(ResultValue v) =>
        string.Join(".", new[] { v.Block }.Concat(v.Components()).Append(v.Stat).Select(ReferenceGrammar.QuoteIfNeeded));

    /// <summary>The formatting functions a reference may name after '|', with a short description.</summary>
    public static readonly IReadOnlyList<(string Name, string Usage)> Functions =
    [
        ("result", "the whole result of a test, e.g. F(3, 20) = 11.51, p < .001"),
        ("p", "a p-value as 'p = .035' or 'p < .001'"),
        ("digits", "a fixed number of decimals, digits(1)"),
        ("fraction", "two decimals (or fraction(n)) without the leading zero, for values up to 1"),
        ("percent", "the value as a percentage, percent or percent(1)"),
        ("df", "degrees of freedom: whole numbers as such, others with two decimals"),
    ];

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

        var function = expression.Function;
        if (function is not null && !Functions.Any(f => f.Name == function.Name))
        {
            diagnostics.UnknownReferenceFunction(reference.Location, function.Name, DiagnosticBag.Nearest(function.Name, Functions.Select(f => f.Name)), Functions.Select(f => f.Name));
            return null;
        }

        if (function is { Name: "result" })
        {
            return ResolveResult(reference, expression, results, primary, alpha, diagnostics);
        }

        if (function is not null && NotAValue(parts, results) is { } what)
        {
            var written = reference.Text[(reference.Text.IndexOf('|', StringComparison.Ordinal) + 1)..].Trim();
            diagnostics.FunctionOnNonValue(reference.Location, function.Name, written, string.Join(".", parts), what, Example(parts, results));
            return null;
        }

        var value = ResolveValue(reference, parts, results, primary, diagnostics);
        if (value is null || function is null)
        {
            return value is null ? null : new ResolvedReference(value, null, null);
        }

        switch (function.Name)
        {
            case "p":
                if (function.Digits is not null)
                {
                    diagnostics.BadReferenceFunction(reference.Location, "p", "it takes no argument; p-values show three decimals, or '< .001'");
                    return null;
                }

                if (!IsPStat(value.Stat))
                {
                    diagnostics.BadReferenceFunction(reference.Location, "p", $"it formats p-values, and '{value.Stat}' is not one");
                    return null;
                }

                return new ResolvedReference(value, ReportStyle.PPhrase(value), null);
            case "digits":
                if (function.Digits is not { } d)
                {
                    diagnostics.BadReferenceFunction(reference.Location, "digits", "say how many decimals, as in digits(1)");
                    return null;
                }

                return new ResolvedReference(value, null, ReportStyle.Fixed(d));
            case "fraction":
                return new ResolvedReference(value, null, ReportStyle.Fraction(function.Digits ?? 2));
            case "percent":
                return new ResolvedReference(value, null, ReportStyle.Percent(function.Digits ?? 0));
            default:
                if (function.Digits is not null)
                {
                    diagnostics.BadReferenceFunction(reference.Location, "df", "it takes no argument");
                    return null;
                }

                return new ResolvedReference(value, null, ReportStyle.Df);
        }
    }

    private static bool IsPStat(string stat) => stat == "p" || stat.StartsWith("p_", StringComparison.Ordinal);

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
            diagnostics.UnknownReference(reference.Location, reference.Text, suggestion is null ? null : suggestion + " | result");
            return null;
        }

        if (groups.Count > 1)
        {
            diagnostics.AmbiguousReference(reference.Location, reference.Text, groups.Take(4).Select(g => string.Join(".", new[] { g.Block }.Concat(g.Components()).Select(ReferenceGrammar.QuoteIfNeeded)) + " | result"));
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

    /// <summary>"a block" or "a term" when a formatting function is applied to a path that names no single value; else null.</summary>
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
            diagnostics.BadReferenceSyntax(reference.Location, reference.Text, "name a block and a statistic, for example {{ main.dose.f }}");
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
        var pathText = reference.Text.Split('|')[0].Trim();
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
/// value, else its first value), and either ready HTML (a sentence or a p phrase), a report style, or
/// neither (the report's default number format).
/// </summary>
public sealed record ResolvedReference(ResultValue Value, string? Html, string? Style)
{
    public string ToHtml(RenderContext context) =>
        Html ?? (Style is { } style ? ReportStyle.Span(Value, style) : HtmlWriter.ValueHtml(Value, context));
}
