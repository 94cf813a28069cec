using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Anova;

/// <summary>
/// NIST StRD ANOVA data through the least-squares (QR) route: each file is balanced, so a second
/// factor "replicate number within group" is orthogonal to the group factor and the group SS in
/// the two-factor main-effects model must equal the certified between-group SS. The response is
/// centred exactly in decimal (at the first observation), as the compiler does.
/// </summary>
public sealed class FactorialAnovaStrdTests
{
    public static TheoryData<string, double> Files => new()
    {
        { "SiRstv", 13 },
        { "SmLs01", 13 },
        { "SmLs02", 13 },
        { "AtmWtAg", 13 },
        { "SmLs04", 13 },
        { "SmLs05", 13 },
        { "SmLs07", 13 },
    };

    [Theory]
    [MemberData(nameof(Files))]
    public void Fit_StrdWithReplicateFactor_GroupSsMatchesCertifiedBetweenSs(string name, double digits)
    {
        var lines = File.ReadAllLines(ReferenceFiles.PathOf("nist-strd-anova", name + ".dat"));
        var rows = lines.Skip(60).Where(l => l.Trim().Length > 0)
            .Select(l => l.Split(' ', StringSplitOptions.RemoveEmptyEntries))
            .ToArray();
        var groups = rows.Select(r => r[0]).ToArray();
        var centre = decimal.Parse(rows[0][1], NumberStyles.Float, CultureInfo.InvariantCulture);
        var y = FactorialTestData.Centred(rows.Select(r => r[1]), centre);
        var replicate = new string[rows.Length];
        var seen = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var i = 0; i < rows.Length; i++)
        {
            seen[groups[i]] = seen.GetValueOrDefault(groups[i]) + 1;
            replicate[i] = seen[groups[i]].ToString("D4", CultureInfo.InvariantCulture);
        }

        var input = new AnovaInput(
            y,
            [FactorialTestData.Factor("group", groups), FactorialTestData.Factor("replicate", replicate)],
            false,
            SumOfSquaresType.Marginal,
            0.05);
        var r = FactorialAnova.Fit(input);
        var certified = JsonDocument.Parse(ReferenceFiles.ReadAllText("nist-strd-anova", "certified.json"))
            .RootElement.GetProperty("datasets").GetProperty(name).GetProperty("certified");
        var ss = double.Parse(certified.GetProperty("between_ss").GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
        var df = int.Parse(certified.GetProperty("between_df").GetString()!, CultureInfo.InvariantCulture);
        Assert.Equal(df, r.Terms[0].Df);
        Accuracy.AssertLre(r.Terms[0].SumOfSquares, ss, digits, name + " between SS (NIST StRD certified)");

        // Sequential SS in the other order must agree too (orthogonal design).
        var swapped = FactorialAnova.Fit(input with { Factors = [input.Factors[1], input.Factors[0]], SsType = SumOfSquaresType.Sequential });
        Accuracy.AssertLre(swapped.Terms[1].SumOfSquares, ss, digits, name + " between SS after replicate (NIST StRD certified)");
    }
}
