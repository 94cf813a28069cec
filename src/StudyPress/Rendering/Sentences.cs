using System.Globalization;
using StudyPress.Charts;
using StudyPress.Evaluation;
using StudyPress.Rendering.Kinds;

namespace StudyPress.Rendering;

/// <summary>
/// Named number styles that a prose reference asks for in words ("2 decimals", "no leading zero",
/// "as percent"), and the spans that keep a number's trace. Numbers the compiler writes itself
/// (tables, sentences, the methods text) are in the report's one format (<see cref="NumberFormat"/>,
/// <see cref="Number"/>); a styled number is written as
/// <c>&lt;span class="v" data-v="ID" data-style="STYLE"&gt;TEXT&lt;/span&gt;</c>, the style naming
/// the rule that turns the manifest value into TEXT, so a checker can reproduce it:
/// <list type="bullet">
/// <item><c>report-p</c>: "&lt; .001" when the value is below 0.001; otherwise three decimals
/// (rounded half away from zero) with the leading "0" dropped: ".035", "1.000".</item>
/// <item><c>report-df</c>: an integral value as a whole number ("20"); otherwise two decimals ("12.03").</item>
/// <item><c>fixed-N</c>: N decimals ("11.51" for fixed-2).</item>
/// <item><c>fraction-N</c>: N decimals with the leading "0" dropped (".63", "−.05"), for values that cannot exceed 1.</item>
/// <item><c>percent-N</c>: the value times 100 with N decimals and a "%" sign ("29%").</item>
/// <item><c>p-N</c>: a p-value with N decimals ("0.0350"), "&lt; 0.0001" (for N = 4) below the smallest such number.</item>
/// <item><c>p-fraction-N</c>: as <c>p-N</c> with the leading "0" dropped (".0350", "&lt; .0001").</item>
/// </list>
/// Rounding is half away from zero on the value's shortest decimal form (the "R" text: 41.15 → 41.2;
/// <see cref="StudyPress.Charts.NumberText"/>); a result that rounds to zero prints without a minus sign; the minus is U+2212 ("−"), as
/// everywhere in the report; invariant culture.
/// </summary>
public static class ReportStyle
{
    public const string P = "report-p";

    public const string Df = "report-df";

    public static string Fixed(int digits) => "fixed-" + digits.ToString(CultureInfo.InvariantCulture);

    public static string Fraction(int digits) => "fraction-" + digits.ToString(CultureInfo.InvariantCulture);

    public static string Percent(int digits) => "percent-" + digits.ToString(CultureInfo.InvariantCulture);

    public static string PFixed(int digits) => "p-" + digits.ToString(CultureInfo.InvariantCulture);

    public static string PFraction(int digits) => "p-fraction-" + digits.ToString(CultureInfo.InvariantCulture);

    /// <summary>Largest number of decimals a style may ask for.</summary>
    public const int MaxDigits = Syntax.ReferenceGrammar.MaxDigits;

    /// <summary>Formats a value by a style name; null when the style is unknown.</summary>
    public static string? Format(string style, double value)
    {
        if (style == P)
        {
            return NumberText.P(value, 3, leadingZero: false);
        }

        if (style == Df)
        {
            return value == Math.Round(value) && Math.Abs(value) < 1e15 ? NumberText.Whole(value) : FixedText(value, 2);
        }

        var dash = style.LastIndexOf('-');
        if (dash < 0 || !int.TryParse(style.AsSpan(dash + 1), NumberStyles.None, CultureInfo.InvariantCulture, out var digits) || digits > MaxDigits)
        {
            return null;
        }

        return style[..dash] switch
        {
            "fixed" => FixedText(value, digits),
            "fraction" => NumberText.DropLeadingZero(FixedText(value, digits)),
            "percent" => NumberText.Percent(value, digits),
            "p" when digits > 0 => NumberText.P(value, digits, leadingZero: true),
            "p-fraction" when digits > 0 => NumberText.P(value, digits, leadingZero: false),
            _ => null,
        };
    }

    /// <summary>The value with <paramref name="digits"/> decimals, rounded half away from zero, without "−0".</summary>
    public static string FixedText(double value, int digits) => NumberText.Fixed(value, digits);

    /// <summary>A traced number in a style; an undefined value shows the usual "n/d" marker.</summary>
    public static string Span(ResultValue v, string style)
    {
        if (!v.Value.IsDefined)
        {
            return "<span class=\"nd\" data-v=\"" + v.Id + "\" tabindex=\"0\" title=\"not defined: " + HtmlWriter.Escape(v.Value.Reason) + "\">n/d</span>";
        }

        var text = Format(style, v.Value.Value) ?? throw new InvalidOperationException("unknown report style " + style);
        return "<span class=\"v\" data-v=\"" + v.Id + "\" data-style=\"" + style + "\" tabindex=\"0\">" + HtmlWriter.Escape(text) + "</span>";
    }

    /// <summary>A traced number in the report's one format (<see cref="NumberFormat.Current"/>): the same text as in the tables.</summary>
    public static string Number(ResultValue v) => HtmlWriter.ValueHtml(v, NumberFormat.Current);

    /// <summary>
    /// Plain text (for cautions and notes, which are escaped whole): "p = 0.035" or "p &lt; 0.001"
    /// in <paramref name="format"/>, never "p = &lt; 0.001".
    /// </summary>
    public static string PText(double p, NumberFormat format, string name = "p")
    {
        var shown = format.Format(Stat.P, p);
        return name + PJoin(shown) + shown;
    }

    /// <summary>What joins a p's name to its shown value: " = ", or " " before "&lt; 0.001".</summary>
    public static string PJoin(string shown) => shown.StartsWith('<') ? " " : " = ";

    /// <summary>"p = 0.035" or "p &lt; 0.001" (HTML) in the report's format, with the given name for p ("p", "adjusted p").</summary>
    public static string PPhrase(ResultValue p, string name = "p")
    {
        if (!p.Value.IsDefined)
        {
            return name + " " + Number(p);
        }

        return name + PJoin(NumberFormat.Current.Format(p.Stat, p.Value.Value)) + Number(p);
    }
}

/// <summary>
/// Result sentences: the test statistic with its degrees of freedom, the exact p (or
/// "p &lt; 0.001"), and an effect size with its interval, for example
/// "F(3, 20) = 11.5, p &lt; 0.001, partial η² = 0.633, 95% CI [0.300, 0.750]". Every number is a
/// traced span in the report's one format (<see cref="ReportStyle.Number"/>), the same text as in the tables. The wording states what was computed, no more.
/// </summary>
public static class Sentences
{
    /// <summary>
    /// Tests that <see cref="Result"/> can phrase: every registered kind's
    /// <see cref="KindRenderer.PhrasedTests"/>.
    /// </summary>
    public static IEnumerable<string> Phrased => KindRenderers.All.Values.SelectMany(r => r.PhrasedTests);

    /// <summary>
    /// The whole result of one manifest group (the values sharing block, test, term, level and
    /// pair), or null with a reason when there is no sentence for it. The sentence is the one the
    /// kind that phrases the test writes (<see cref="KindRenderer.ResultSentence"/>).
    /// </summary>
    public static string? Result(ResultSet all, ResultValue member, double alpha, out string? why)
    {
        why = null;
        var phrasing = KindRenderers.Phrasing(member.Test);
        if (phrasing is not null)
        {
            var text = phrasing.ResultSentence(member, Group(all, member), all, alpha, out why);
            if (text is not null || why is not null)
            {
                return text;
            }
        }

        why = $"there is no result sentence for '{member.Test}' values" + (phrasing is not null ? " without its test statistic" : string.Empty);
        return null;
    }

    /// <summary>"F(3, 20) = 11.5, p &lt; 0.001": an F statistic with its two degrees of freedom and p.</summary>
    public static string FTest(ResultValue df1, ResultValue df2, ResultValue f, ResultValue p) =>
        $"F({ReportStyle.Number(df1)}, {ReportStyle.Number(df2)}) = {ReportStyle.Number(f)}, {ReportStyle.PPhrase(p)}";

    /// <summary>
    /// The sentence of one pairwise comparison: "<paramref name="difference"/> = D, simultaneous 95%
    /// CI [L, H], adjusted p = P" (with ", z = Z" before p when <paramref name="withZ"/> and the group
    /// has a <c>statistic</c>); null without <c>diff</c> and <c>p_adj</c>.
    /// </summary>
    public static string? Pairwise(IReadOnlyDictionary<string, ResultValue> g, double alpha, string difference, bool withZ)
    {
        if (g.GetValueOrDefault("diff") is not { } diff || g.GetValueOrDefault("p_adj") is not { } pa)
        {
            return null;
        }

        var text = $"{difference} = {ReportStyle.Number(diff)}";
        if (g.GetValueOrDefault("ci_low") is { } cl && g.GetValueOrDefault("ci_high") is { } ch)
        {
            text += $", simultaneous {ConfidenceText(alpha)}% CI [{ReportStyle.Number(cl)}, {ReportStyle.Number(ch)}]";
        }

        if (withZ && g.GetValueOrDefault("statistic") is { } z)
        {
            text += $", z = {ReportStyle.Number(z)}";
        }

        return text + ", " + ReportStyle.PPhrase(pa, "adjusted p");
    }

    /// <summary>The values that share the member's block, test, term, level and pair, by statistic.</summary>
    public static Dictionary<string, ResultValue> Group(ResultSet all, ResultValue member)
    {
        var g = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        foreach (var v in all.Values)
        {
            if (SameGroup(v, member))
            {
                g.TryAdd(v.Stat, v);
            }
        }

        return g;
    }

    public static bool SameGroup(ResultValue a, ResultValue b) =>
        a.Block == b.Block && a.Test == b.Test && a.Term == b.Term && a.Level == b.Level
        && (a.Pair is null ? b.Pair is null : b.Pair is not null && a.Pair.SequenceEqual(b.Pair, StringComparer.Ordinal));

    /// <summary>The confidence level that goes with alpha, as a percentage ("95").</summary>
    public static string ConfidenceText(double alpha) => NumberText.ConfidenceNumber(alpha);

    /// <summary>Alpha as the report writes it ("0.05", or ".05" without the leading zero of p).</summary>
    public static string AlphaText(double alpha) => NumberFormat.Current.Level(alpha);
}
