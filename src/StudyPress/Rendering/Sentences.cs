using System.Globalization;
using StudyPress.Charts;
using StudyPress.Evaluation;

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

    /// <summary>"p = 0.035" or "p &lt; 0.001" (HTML) in the report's format, with the given name for p ("p", "adjusted p").</summary>
    public static string PPhrase(ResultValue p, string name = "p")
    {
        if (!p.Value.IsDefined)
        {
            return name + " " + Number(p);
        }

        var shown = NumberFormat.Current.Format(p.Stat, p.Value.Value);
        return name + (shown.StartsWith('<') ? " " : " = ") + Number(p);
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
    /// <summary>Tests that <see cref="Result"/> can phrase.</summary>
    public static readonly string[] Phrased =
    [
        "anova", "welch", "kruskal_wallis", "brown_forsythe", "levene", "bartlett", "shapiro_wilk", "durbin_watson",
        "tukey_hsd", "games_howell", "holm", "bonferroni", "dunnett", "dunn", "power", "summary", "means",
        "trimmed_means",
    ];

    private static string S2(ResultValue v) => ReportStyle.Number(v);

    private static string Fr(ResultValue v) => ReportStyle.Number(v);

    private static string Df(ResultValue v) => ReportStyle.Number(v);

    /// <summary>
    /// The whole result of one manifest group (the values sharing block, test, term, level and
    /// pair), or null with a reason when there is no sentence for it.
    /// </summary>
    public static string? Result(ResultSet all, ResultValue member, double alpha, out string? why)
    {
        why = null;
        var g = Group(all, member);
        ResultValue? Get(string stat) => g.GetValueOrDefault(stat);
        var confidence = ConfidenceText(alpha);
        switch (member.Test)
        {
            case "anova" when member.Term is "residual" or "total":
                why = $"the {member.Term} row of an ANOVA table has no test";
                return null;
            case "anova":
                {
                    var resDf = all.Values.FirstOrDefault(v => v.Block == member.Block && v.Test == "anova" && v.Term == "residual" && v.Stat == "df");
                    if (Get("f") is not { } f || Get("p") is not { } p || Get("df") is not { } df || resDf is null)
                    {
                        break;
                    }

                    var text = $"F({Df(df)}, {Df(resDf)}) = {S2(f)}, {ReportStyle.PPhrase(p)}";
                    if (Get("partial_eta2") is { } pe)
                    {
                        text += $", partial η² = {Fr(pe)}";
                        if (Get("partial_eta2_ci_low") is { } lo && Get("partial_eta2_ci_high") is { } hi)
                        {
                            text += $", {confidence}% CI [{Fr(lo)}, {Fr(hi)}]";
                        }
                    }

                    return text;
                }

            case "welch" or "brown_forsythe" or "levene":
                if (Get("f") is { } wf && Get("df1") is { } d1 && Get("df2") is { } d2 && Get("p") is { } wp)
                {
                    return $"F({Df(d1)}, {Df(d2)}) = {S2(wf)}, {ReportStyle.PPhrase(wp)}";
                }

                break;
            case "kruskal_wallis":
                if (Get("h") is { } h && Get("df") is { } hd && Get("p") is { } hp)
                {
                    return $"H({Df(hd)}) = {S2(h)}, {ReportStyle.PPhrase(hp)}";
                }

                if (Get("mean_rank") is { } mr && Get("n") is { } mn)
                {
                    return $"mean rank = {S2(mr)}, n = {Df(mn)}";
                }

                break;
            case "bartlett":
                if (Get("statistic") is { } b && Get("df") is { } bd && Get("p") is { } bp)
                {
                    return $"χ²({Df(bd)}) = {S2(b)}, {ReportStyle.PPhrase(bp)}";
                }

                break;
            case "shapiro_wilk":
                if (Get("w") is { } w && Get("p") is { } sp)
                {
                    return $"W = {Fr(w)}, {ReportStyle.PPhrase(sp)}";
                }

                break;
            case "durbin_watson":
                if (Get("d") is { } d && Get("p") is { } dp)
                {
                    return $"d = {S2(d)}, {ReportStyle.PPhrase(dp)}";
                }

                break;
            case "tukey_hsd" or "games_howell" or "holm" or "bonferroni" or "dunnett" or "dunn":
                if (Get("diff") is { } diff && Get("p_adj") is { } pa)
                {
                    var text = member.Test == "dunn" ? $"difference in mean rank = {S2(diff)}" : $"difference = {S2(diff)}";
                    if (Get("ci_low") is { } cl && Get("ci_high") is { } ch)
                    {
                        text += $", simultaneous {confidence}% CI [{S2(cl)}, {S2(ch)}]";
                    }

                    if (member.Test == "dunn" && Get("statistic") is { } z)
                    {
                        text += $", z = {S2(z)}";
                    }

                    return text + ", " + ReportStyle.PPhrase(pa, "adjusted p");
                }

                break;
            case "power":
                if (Get("power") is { } pw && Get("n_per_group") is { } npg && Get("effect_f") is { } ef)
                {
                    return $"power = {Fr(pw)} with n = {Df(npg)} per group for Cohen's f = {S2(ef)}";
                }

                break;
            case "summary":
                if (Get("mean") is { } m && Get("sd") is { } sd && Get("n") is { } n)
                {
                    var text = $"mean = {S2(m)}, SD = {S2(sd)}, n = {Df(n)}";
                    if (Get("ci_low") is { } sl && Get("ci_high") is { } sh)
                    {
                        text += $", {confidence}% CI [{S2(sl)}, {S2(sh)}]";
                    }

                    return text;
                }

                break;
            case "means":
                if (Get("mean") is { } mm && Get("n") is { } mcount)
                {
                    return $"mean = {S2(mm)}, n = {Df(mcount)}";
                }

                break;
            case "trimmed_means":
                if (Get("f") is { } tf && Get("df1") is { } td1 && Get("df2") is { } td2 && Get("p") is { } tp)
                {
                    return $"F({Df(td1)}, {Df(td2)}) = {S2(tf)}, {ReportStyle.PPhrase(tp)}";
                }

                if (Get("trimmed_mean") is { } tm && Get("n_effective") is { } th)
                {
                    return $"trimmed mean = {S2(tm)}, {Df(th)} values after trimming";
                }

                break;
        }

        why = $"there is no result sentence for '{member.Test}' values" + (Phrased.Contains(member.Test) ? " without its test statistic" : string.Empty);
        return null;
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
