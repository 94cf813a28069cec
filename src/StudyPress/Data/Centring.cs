using System.Globalization;

namespace StudyPress.Data;

/// <summary>Centring of numeric columns by their exact mean (see <see cref="Syntax.NumberRules"/> for how numbers are read).</summary>
internal static class Centring
{
    /// <summary>
    /// Centres decimals by their exact mean: <c>centred[i] = (double)(values[i] - centre)</c>.
    /// Missing cells become NaN (and 0 in the exact values). Falls back to doubles when the sum
    /// overflows decimal.
    /// </summary>
    public static NumericColumn CentreDecimals(string name, decimal[] values, bool[] missing)
    {
        decimal sum = 0;
        var n = 0;
        try
        {
            for (var i = 0; i < values.Length; i++)
            {
                if (!missing[i])
                {
                    sum += values[i];
                    n++;
                }
            }
        }
        catch (OverflowException)
        {
            var approx = new double[values.Length];
            for (var i = 0; i < values.Length; i++)
            {
                approx[i] = missing[i] ? double.NaN : (double)values[i];
            }

            return CentreDoubles(name, approx);
        }

        var centre = n > 0 ? sum / n : 0m;
        var centred = new double[values.Length];
        var raw = new double[values.Length];

        // Element by element (each value on its own), so the work splits over the cores unchanged.
        const int Block = 1 << 16;
        Parallel.For(0, (values.Length + Block - 1) / Block, b =>
        {
            var end = Math.Min(values.Length, (b + 1) * Block);
            for (var i = b * Block; i < end; i++)
            {
                if (missing[i])
                {
                    centred[i] = double.NaN;
                    raw[i] = double.NaN;
                    values[i] = 0m;
                }
                else
                {
                    centred[i] = (double)(values[i] - centre);
                    raw[i] = (double)values[i];
                }
            }
        });

        return new NumericColumn(name, centred, raw, (double)centre, values.Length - n, ExactValues.Of(values));
    }

    /// <summary>Centres doubles (NaN = missing) by their mean.</summary>
    public static NumericColumn CentreDoubles(string name, double[] values)
    {
        var present = values.Where(v => !double.IsNaN(v)).ToArray();
        var centre = present.Length > 0 ? StudyPress.Statistics.Groups.Mean(present) : 0;
        var centred = values.Select(v => double.IsNaN(v) ? double.NaN : v - centre).ToArray();
        return new NumericColumn(name, centred, values, centre, values.Length - present.Length, null);
    }
}
