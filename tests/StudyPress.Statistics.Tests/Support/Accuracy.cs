using System.Globalization;

namespace StudyPress.Statistics.Tests.Support;

/// <summary>Accuracy measures used by the reference tests.</summary>
public static class Accuracy
{
    /// <summary>
    /// Log relative error, LRE = -log10(|x - c| / |c|) (McCullough 1998, "Assessing the reliability
    /// of statistical software"); 15.9 when x equals c exactly. For c = 0 the absolute error is used.
    /// </summary>
    public static double Lre(double x, double certified)
    {
        var err = certified == 0 ? Math.Abs(x) : Math.Abs(x - certified) / Math.Abs(certified);
        return err == 0 ? 15.9 : -Math.Log10(err);
    }

    /// <summary>Asserts that x agrees with the certified value to at least <paramref name="digits"/>.</summary>
    public static void AssertLre(double x, double certified, double digits, string what)
    {
        var lre = Lre(x, certified);
        Assert.True(
            lre >= digits,
            string.Create(CultureInfo.InvariantCulture, $"{what}: got {x:R}, certified {certified:R}, LRE {lre:F2} < {digits}"));
    }

    /// <summary>
    /// Asserts that x rounds to the printed value: |x - printed| &lt;= half a unit in the printed
    /// value's last decimal place (plus a hair for binary representation).
    /// </summary>
    public static void AssertRoundsTo(double x, string printed, string what)
    {
        var p = double.Parse(printed, NumberStyles.Float, CultureInfo.InvariantCulture);
        var dot = printed.IndexOf('.', StringComparison.Ordinal);
        var decimals = dot < 0 ? 0 : printed.Length - dot - 1;
        var half = 0.5 * Math.Pow(10, -decimals);
        Assert.True(
            Math.Abs(x - p) <= half * (1 + 1e-9),
            string.Create(CultureInfo.InvariantCulture, $"{what}: got {x:R}, printed {printed} (±{half})"));
    }
}

/// <summary>Locates reference files copied next to the test assembly.</summary>
public static class ReferenceFiles
{
    public static string PathOf(params string[] parts) =>
        Path.Combine([AppContext.BaseDirectory, "Reference", .. parts]);

    public static string ReadAllText(params string[] parts) => File.ReadAllText(PathOf(parts));
}
