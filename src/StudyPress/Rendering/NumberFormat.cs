using System.Globalization;
using StudyPress.Evaluation;

namespace StudyPress.Rendering;

/// <summary>
/// How numbers are shown. General values: <c>significant-digits</c> significant digits, except that a value
/// with more integer digits than that is rounded to a whole number (so 18009 stays 18009, not 1.80e4).
/// Counts and degrees of freedom print as integers when integral. p-values: <c>p-decimals</c>
/// decimals, and "&lt; 0.001" (for p-decimals 3) below the smallest printable value.
/// Invariant culture throughout: the report is the same on every machine.
/// </summary>
public sealed class NumberFormat(int digits, int pDigits)
{
    private static readonly IReadOnlySet<string> IntegerStats = Stat.Counts;
    private static readonly HashSet<string> PStats = new(StringComparer.Ordinal) { Stat.P, Stat.PAdj, Stat.PLower, Stat.PUpper };

    public int Digits { get; } = digits;

    public int PDigits { get; } = pDigits;

    public string Format(string stat, double value)
    {
        if (PStats.Contains(stat))
        {
            return P(value);
        }

        if (IntegerStats.Contains(stat) && value == Math.Round(value))
        {
            return value.ToString("0", CultureInfo.InvariantCulture);
        }

        return General(value);
    }

    public string P(double p)
    {
        var smallest = Math.Pow(10, -PDigits);
        if (p < smallest)
        {
            return "< " + smallest.ToString("F" + PDigits.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);
        }

        return p.ToString("F" + PDigits.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);
    }

    public string General(double value)
    {
        if (value == 0)
        {
            return "0";
        }

        var abs = Math.Abs(value);
        var magnitude = (int)Math.Floor(Math.Log10(abs));
        if (magnitude >= Digits - 1)
        {
            if (magnitude >= 15)
            {
                return value.ToString("E" + (Digits - 1).ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);
            }

            return Math.Round(value, MidpointRounding.AwayFromZero).ToString("0", CultureInfo.InvariantCulture);
        }

        if (magnitude < -6)
        {
            return value.ToString("E" + (Digits - 1).ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);
        }

        var decimals = Digits - 1 - magnitude;
        var rounded = Math.Round(value, decimals, MidpointRounding.AwayFromZero);
        // Rounding can carry into a new digit (9.996 -> 10.00); recompute the decimals then.
        if (rounded != 0 && (int)Math.Floor(Math.Log10(Math.Abs(rounded))) > magnitude)
        {
            decimals = Math.Max(0, decimals - 1);
        }

        var s = rounded.ToString("F" + decimals.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);
        return s == "-0" || s.StartsWith("-0.", StringComparison.Ordinal) && s.Trim('-', '0', '.').Length == 0 ? s.TrimStart('-') : s;
    }
}
