using System.Globalization;

namespace StudyPress.Syntax;

/// <summary>What is wrong with a cell's text as a number.</summary>
internal enum NumberProblem
{
    None,
    NotNumber,
    NotFinite,

    /// <summary>Not a number with '.' as the decimal mark, but one with ','.</summary>
    DecimalComma,

    /// <summary>A finite number too large to keep (beyond ±1e300).</summary>
    TooLarge,

    /// <summary>A number that is not zero but nearer to 0 than ±1e-300 (it would underflow to 0 or lose its digits).</summary>
    TooSmall,
}

/// <summary>
/// The number rules every source shares (CSV text, text cells of spreadsheets and databases):
/// how a cell's text becomes an exact decimal and a double, and how a column is centred by its
/// exact mean. One place, so the sources cannot drift apart.
/// </summary>
internal static class NumberRules
{
    private const NumberStyles Style = NumberStyles.AllowLeadingSign | NumberStyles.AllowDecimalPoint | NumberStyles.AllowExponent;

    /// <summary>
    /// Reads trimmed text as a number. True with the exact decimal and the nearest double; when
    /// <paramref name="exact"/> is 0 but <paramref name="approx"/> is not, the value is outside
    /// decimal's range (too small or too large) and only the double is kept.
    /// </summary>
    public static bool Parse(string text, char decimalMark, out decimal exact, out double approx, out NumberProblem problem)
    {
        exact = 0;
        approx = 0;
        problem = NumberProblem.None;
        var t = text;
        if (decimalMark == ',')
        {
            if (t.Contains('.', StringComparison.Ordinal))
            {
                problem = NumberProblem.NotNumber;
                return false;
            }

            t = t.Replace(',', '.');
        }

        if (decimal.TryParse(t, Style, CultureInfo.InvariantCulture, out exact))
        {
            approx = double.Parse(t, Style, CultureInfo.InvariantCulture);
            if (exact == 0 && IsUnderflow(t, approx))
            {
                exact = 0;
                approx = 0;
                problem = NumberProblem.TooSmall;
                return false;
            }

            return true;
        }

        if (double.TryParse(t, Style, CultureInfo.InvariantCulture, out approx))
        {
            if (double.IsNaN(approx) || t.Any(char.IsLetter) && !t.Contains('e', StringComparison.OrdinalIgnoreCase))
            {
                problem = NumberProblem.NotFinite;
                return false;
            }

            if (double.IsFinite(approx) && IsUnderflow(t, approx))
            {
                approx = 0;
                problem = NumberProblem.TooSmall;
                return false;
            }

            if (double.IsFinite(approx))
            {
                // Outside decimal's range but a finite double: keep the double.
                exact = 0;
                approx = approx == 0 ? 0 : approx;
                if (Math.Abs(approx) > 1e300)
                {
                    problem = NumberProblem.TooLarge;
                    return false;
                }

                return true;
            }

            problem = NumberProblem.TooLarge;
            return false;
        }

        if (double.TryParse(t, NumberStyles.Float, CultureInfo.InvariantCulture, out var special) && !double.IsFinite(special))
        {
            problem = NumberProblem.NotFinite;
            return false;
        }

        var lower = t.ToLowerInvariant();
        if (lower is "nan" or "inf" or "-inf" or "+inf" or "infinity" or "-infinity" or "+infinity" or "∞" or "-∞")
        {
            problem = NumberProblem.NotFinite;
            return false;
        }

        if (decimalMark == '.' && text.Contains(',', StringComparison.Ordinal) &&
            decimal.TryParse(text.Replace(',', '.'), Style, CultureInfo.InvariantCulture, out _))
        {
            problem = NumberProblem.DecimalComma;
            return false;
        }

        problem = NumberProblem.NotNumber;
        return false;
    }

    /// <summary>Smallest magnitude kept, the mirror of the ±1e300 limit on large numbers.</summary>
    public const double MinMagnitude = 1e-300;

    /// <summary>
    /// True when number text whose mantissa has a non-zero digit reads as a double nearer to 0 than
    /// <see cref="MinMagnitude"/> (0 itself for 1e-400, a subnormal for 1e-310). "0e-400" is zero.
    /// </summary>
    public static bool IsUnderflow(string text, double approx)
    {
        if (Math.Abs(approx) >= MinMagnitude)
        {
            return false;
        }

        foreach (var ch in text)
        {
            if (ch is 'e' or 'E')
            {
                break;
            }

            if (ch is >= '1' and <= '9')
            {
                return true;
            }
        }

        return false;
    }
}
