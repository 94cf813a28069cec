using StudyPress.Charts;
using StudyPress.Evaluation;

namespace StudyPress.Rendering;

/// <summary>
/// The report's number format: which statistic is which kind of number, written by the one set of
/// rules in <see cref="NumberText"/> (significant digits, p-values, the minus sign U+2212, percent,
/// plurals; docs/study-file.md, "How numbers are written"). Counts and degrees of freedom print as
/// whole numbers when integral; p-values by <c>p-decimals</c> and <c>p-leading-zero</c>; every
/// other value with <c>significant-digits</c> significant digits — in tables, prose, the methods
/// text, result sentences and chart labels alike.
/// </summary>
public sealed class NumberFormat(int digits, int pDigits, bool pLeadingZero = true)
{
    private static readonly IReadOnlySet<string> IntegerStats = Stat.Counts;
    private static NumberFormat? last;

    public NumberFormat(NumberText text)
        : this(text.SignificantDigits, text.PDecimals, text.PLeadingZero)
    {
    }

    /// <summary>The default format (3 significant digits, p with 3 decimals and its leading zero).</summary>
    public static NumberFormat Default { get; } = new(NumberText.Default);

    /// <summary>
    /// The format of the study being compiled (<see cref="NumberText.Current"/>, set by
    /// <see cref="Use"/> for one compilation), for the sentence helpers that are called without a
    /// render context.
    /// </summary>
    public static NumberFormat Current
    {
        get
        {
            var text = NumberText.Current;
            var f = last;
            if (f is null || f.Text != text)
            {
                f = new NumberFormat(text);
                last = f;
            }

            return f;
        }
    }

    /// <summary>Makes <paramref name="format"/> the current format until the returned scope is disposed.</summary>
    public static IDisposable Use(NumberFormat format) => NumberText.Use(format.Text);

    public int Digits { get; } = digits;

    public int PDigits { get; } = pDigits;

    public bool PLeadingZero { get; } = pLeadingZero;

    /// <summary>The rules themselves, shared with the charts.</summary>
    public NumberText Text { get; } = new(digits, pDigits, pLeadingZero);

    /// <summary>Whether a statistic is a p-value: <c>p</c> and every <c>p_…</c> name (p_adj, p_bonferroni, p_gg, p_hf).</summary>
    public static bool IsP(string stat) => stat == Stat.P || stat.StartsWith("p_", StringComparison.Ordinal);

    public string Format(string stat, double value)
    {
        if (IsP(stat))
        {
            return P(value);
        }

        if (IntegerStats.Contains(stat) && value == Math.Round(value))
        {
            return NumberText.Whole(value);
        }

        return General(value);
    }

    public string P(double p) => Text.P(p);

    public string General(double value) => Text.General(value);

    /// <summary>α as written ("0.05", or ".05" without the leading zero of p).</summary>
    public string Level(double alpha) => Text.Level(alpha);
}
