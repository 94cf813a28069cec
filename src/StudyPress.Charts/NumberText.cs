using System.Globalization;

namespace StudyPress.Charts;

/// <summary>
/// How every number the report shows is written — tables, prose, the methods text, chart labels,
/// captions, and through the report's text the Word and LaTeX outputs. It lives beside the charts
/// (the lowest assembly the compiler uses, as <see cref="BidiText"/> does) so that chart labels and
/// the compiler's text follow the same rules; the compiler's <c>NumberFormat</c> adds only which
/// statistic is which kind of number.
/// <list type="bullet">
/// <item>Rounding: half away from zero, on the value's shortest decimal form (the text that reads
/// back as the same double: 41.15 → 41.2, 4.015 → 4.02), so a number rounds as its printed digits say.</item>
/// <item>Ordinary values: <see cref="SignificantDigits"/> significant digits; a value with more integer digits than that is rounded to a whole number (18009 stays
/// 18009); scientific notation only from 10^15 up or below 10^-6.</item>
/// <item>p-values: <see cref="PDecimals"/> decimals; below the smallest such number,
/// "&lt; 0.001" (for 3). The leading "0" is written unless <see cref="PLeadingZero"/> is false
/// (".035", "&lt; .001"); the significance level α follows the same rule.</item>
/// <item>Minus: the minus sign U+2212 ("−2.77"), never a hyphen; a value that rounds to zero has no sign.</item>
/// <item>Percent: no space before the sign ("95%").</item>
/// <item>Counts with a noun: the plural by the count ("1 comparison", "3 comparisons"), never "comparison(s)".</item>
/// </list>
/// Invariant culture throughout: the text is the same on every machine.
/// </summary>
public sealed record NumberText(int SignificantDigits = 3, int PDecimals = 3, bool PLeadingZero = true)
{
    /// <summary>The default style: 3 significant digits, p with 3 decimals and its leading zero.</summary>
    public static readonly NumberText Default = new();

    private static readonly AsyncLocal<NumberText?> Ambient = new();

    /// <summary>
    /// The rules of the study being compiled (set by <see cref="Use"/> for one compilation), for
    /// code that writes numbers without a report context at hand: chart labels made during
    /// evaluation, sentence helpers. <see cref="Default"/> outside a compilation.
    /// </summary>
    public static NumberText Current => Ambient.Value ?? Default;

    /// <summary>Makes <paramref name="rules"/> the current rules until the returned scope is disposed.</summary>
    public static IDisposable Use(NumberText rules)
    {
        var previous = Ambient.Value;
        Ambient.Value = rules;
        return new Scope(() => Ambient.Value = previous);
    }

    /// <summary>The minus sign of every number shown (U+2212).</summary>
    public const char Minus = '\u2212';

    /// <summary>An ordinary value with <see cref="SignificantDigits"/> significant digits.</summary>
    public string General(double value)
    {
        if (value == 0 || double.IsNaN(value))
        {
            return value == 0 ? "0" : "NaN";
        }

        if (double.IsInfinity(value))
        {
            return value > 0 ? "∞" : Minus + "∞";
        }

        var digits = SignificantDigits;
        var abs = Math.Abs(value);
        var magnitude = (int)Math.Floor(Math.Log10(abs));
        if (magnitude >= digits - 1)
        {
            if (magnitude >= 15)
            {
                return Signed(value.ToString("E" + (digits - 1).ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture));
            }

            return Whole(value);
        }

        if (magnitude < -6)
        {
            return Signed(value.ToString("E" + (digits - 1).ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture));
        }

        var decimals = digits - 1 - magnitude;
        var rounded = Fixed(value, decimals);
        // Rounding can carry into a new digit (9.996 -> 10.00); one decimal fewer then.
        var carried = double.Parse(rounded.Replace(Minus, '-'), NumberStyles.Float, CultureInfo.InvariantCulture);
        if (carried != 0 && (int)Math.Floor(Math.Log10(Math.Abs(carried))) > magnitude)
        {
            return Fixed(value, Math.Max(0, decimals - 1));
        }

        return rounded;
    }

    /// <summary>A whole number ("20"), with the minus sign when negative.</summary>
    public static string Whole(double value) => Fixed(value, 0);

    /// <summary>The value with <paramref name="decimals"/> decimals, rounded half away from zero; no sign when it rounds to zero.</summary>
    public static string Fixed(double value, int decimals)
    {
        var format = "F" + decimals.ToString(CultureInfo.InvariantCulture);
        if (decimals <= 28 && Shortest(value) is { } exact)
        {
            var r = Math.Round(exact, decimals, MidpointRounding.AwayFromZero);
            var s = r.ToString(format, CultureInfo.InvariantCulture);
            return Signed(r == 0 ? s.TrimStart('-') : s);
        }

        // Beyond decimal's range: on the double.
        var rounded = Math.Round(value, Math.Min(decimals, 15), MidpointRounding.AwayFromZero);
        if (rounded == 0)
        {
            rounded = 0; // drops the sign of -0
        }

        return Signed(rounded.ToString(format, CultureInfo.InvariantCulture));
    }

    /// <summary>The value's shortest round-trip decimal form as a decimal, or null outside decimal's range.</summary>
    private static decimal? Shortest(double value)
    {
        var abs = Math.Abs(value);
        if (double.IsNaN(value) || abs >= 7.9e27 || (abs != 0 && abs < 1e-27))
        {
            return null;
        }

        return decimal.Parse(value.ToString("R", CultureInfo.InvariantCulture), NumberStyles.Float, CultureInfo.InvariantCulture);
    }

    /// <summary>A p-value: <see cref="PDecimals"/> decimals, "&lt; 0.001" (for 3) below the smallest such number; the leading zero by <see cref="PLeadingZero"/>.</summary>
    public string P(double p) => P(p, PDecimals, PLeadingZero);

    /// <summary>A p-value with the given decimals and leading-zero rule.</summary>
    public static string P(double p, int decimals, bool leadingZero)
    {
        var smallest = Math.Pow(10, -decimals);
        var below = p < smallest;
        var text = Fixed(below ? smallest : p, decimals);
        text = leadingZero ? text : DropLeadingZero(text);
        return below ? "< " + text : text;
    }

    /// <summary>The significance level α as written ("0.05", or ".05" without the leading zero of p): every digit it was given.</summary>
    public string Level(double alpha)
    {
        var s = Signed(alpha.ToString("R", CultureInfo.InvariantCulture));
        return PLeadingZero ? s : DropLeadingZero(s);
    }

    /// <summary>A percentage of a fraction with <paramref name="decimals"/> decimals and no space before the sign ("29%").</summary>
    public static string Percent(double fraction, int decimals) => Fixed(fraction * 100, decimals) + "%";

    /// <summary>The confidence level that goes with α ("95%").</summary>
    public static string Confidence(double alpha) => ConfidenceNumber(alpha) + "%";

    /// <summary>The confidence level that goes with α, without the sign ("95").</summary>
    public static string ConfidenceNumber(double alpha) => Math.Round(100 * (1 - alpha), 10).ToString("R", CultureInfo.InvariantCulture);

    /// <summary>"1 comparison", "3 comparisons": the count and the noun in the number the count needs.</summary>
    public static string Count(long n, string singular, string? plural = null) =>
        Signed(n.ToString(CultureInfo.InvariantCulture)) + " " + Noun(n, singular, plural);

    /// <summary>The noun in the number a count needs ("group" for 1, "groups" otherwise).</summary>
    public static string Noun(long n, string singular, string? plural = null) => n == 1 ? singular : plural ?? singular + "s";

    /// <summary>Number text with its hyphen-minus written as the minus sign (U+2212).</summary>
    public static string Signed(string ascii) => ascii.Replace('-', Minus);

    private sealed class Scope(Action end) : IDisposable
    {
        public void Dispose() => end();
    }

    /// <summary>".035" for "0.035", "−.05" for "−0.05"; other text unchanged.</summary>
    public static string DropLeadingZero(string s) =>
        s.StartsWith("0.", StringComparison.Ordinal) ? s[1..]
        : s.StartsWith(Minus + "0.", StringComparison.Ordinal) ? Minus + s[2..]
        : s;
}
