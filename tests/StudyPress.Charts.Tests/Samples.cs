namespace StudyPress.Charts.Tests;

/// <summary>Small invented inputs for geometry and robustness tests (not reference data).</summary>
internal static class Samples
{
    public static readonly ChartLabels Labels = new("Test chart", "Group", "Response");

    public static IReadOnlyList<(string Name, Func<Chart> Make)> All() =>
    [
        ("groups", () => StatCharts.GroupDistributions(
            [new("A", [1, 2, 3, 4, 5, 6, 7, 8, 9, 30]), new("B", [4, 4, 4, 5, 6]), new("C", [2.5])], Labels)),
        ("means", () => StatCharts.GroupMeans(
            [new("A", 5, 3.9, 6.1), new("B", 7.2, 6.0, 8.4), new("C", 4.1, 2.2, 6.0)], "95 %", Labels)),
        ("profiles", () => StatCharts.SubjectProfiles(
            ["week 1", "week 2", "week 3"],
            [new("s1", "shade", [4.1, 5.0, 6.2]), new("s2", "shade", [3.8, 4.9, 5.5]), new("s3", "sun", [4.4, 6.1, 8.0]), new("s4", "sun", [4.0, 5.8, 7.9])],
            "Light",
            [new(4.075, 3.7, 4.45), new(5.45, 4.6, 6.3), new(6.9, 5.3, 8.5)],
            "95%",
            new("Profiles", "Week", "Height (cm)"))),
        ("interaction", () => StatCharts.InteractionPlot(["low", "mid", "high"], ["male", "female"],
            [new("low", "male", 3), new("mid", "male", 4), new("high", "male", 6), new("low", "female", 3.5), new("mid", "female", 5.5), new("high", "female", 5)],
            "Sex", new("Interaction", "Dose", "Mean response"))),
        ("qq", () => StatCharts.NormalQuantilePlot([-1.2, 0.3, 0.5, -0.1, 2.0, 0.8, -0.6, 0.1, -0.3, 1.1], new("Normal Q–Q", "Normal quantile", "Residual"))),
        ("histogram", () => StatCharts.ResidualHistogram([-1.2, 0.3, 0.5, -0.1, 2.0, 0.8, -0.6, 0.1, -0.3, 1.1, 0.2, -0.4, 0.0, 0.6, -0.9], new("Residuals", "Residual", "Count"))),
        ("rvf", () => StatCharts.ResidualsVersusFitted([1, 2, 3, 4, 5], [0.2, -0.4, 0.1, 0.5, -0.3], new("Residuals vs fitted", "Fitted", "Residual"))),
        ("f", () => StatCharts.FDistribution(2, 12, 5.1, 0.05, new("F(2, 12)", "F", "Density"))),
        ("f-huge", () => StatCharts.FDistribution(3, 20, 512.7, 0.05, new("F(3, 20)", "F", "Density"))),
        ("power", () => StatCharts.PowerCurve(
            Enumerable.Range(2, 29).Select(n => new PowerPoint(n, 1 - Math.Exp(-n / 8.0))).ToList(), 0.8, new PowerPoint(13, 1 - Math.Exp(-13 / 8.0)),
            new("Power", "n per group", "Power"))),
        ("intervals", () => StatCharts.SimultaneousIntervals(
            [new("B − A", 2.2, 0.4, 4.0), new("C − A", -0.9, -2.7, 0.9), new("C − B", -3.1, -4.9, -1.3)], "95 % joint", new("Tukey", "Difference", ""))),
        ("equivalence", () => StatCharts.EquivalenceIntervals(
            [new("B − A", 0.3, -0.5, 1.1, true), new("C − A", 1.2, 0.1, 2.3, false)], -1.5, 1.5, "90% intervals", new("Equivalence", "Difference", ""))),
    ];
}
