namespace StudyPress.Statistics.Anova;

/// <summary>
/// Fixed-effects ANOVA of rows, for any number of factors: the rows are summarised per cell
/// (count, mean and within-cell sum of squares, <see cref="CellStatistics.Of"/>; for one factor
/// with exact decimal data also the cells' exact sums) and the model is fitted from those cells by
/// <see cref="CellStatisticsAnova"/>, the one fit of every fixed-effects table, whether its cells
/// came from rows or from a database; the per-observation fitted values, leverages and residuals
/// then follow from the fitted cells (<see cref="CellStatisticsAnova.OnRows"/>). The fit costs
/// O(cells × p²), whatever the number of rows; summarising the rows and the residuals are two
/// passes over them. Sums of squares of types 1, 2 and 3: <see cref="SumOfSquaresTypes"/>.
/// <para>
/// Domain: call <see cref="AnovaDesign.Check(AnovaInput)"/> first. A design it rejects (a factor with one
/// level, an empty cell with interactions, fewer observations than parameters, a rank-deficient
/// coding) makes <see cref="Fit"/> throw <see cref="ArgumentException"/> with the same message.
/// Without replication (residual df 0) the table has SS and df, and F, p are undefined.
/// </para>
/// </summary>
public static class FactorialAnova
{
    /// <summary>Fits the model and fills the ANOVA table, fitted values, residuals and leverages in input order.</summary>
    public static AnovaResult Fit(AnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        var (cells, cellOf) = Cells(input);
        if (CellStatisticsAnova.Check(cells) is { } problem)
        {
            throw new ArgumentException(problem.Message, nameof(input));
        }

        return CellStatisticsAnova.OnRows(CellStatisticsAnova.Fit(cells), input.Response, cellOf);
    }

    /// <summary>
    /// The rows as cells: one <see cref="CellStatistics"/> per cell with observations (in order of
    /// first occurrence; level codes are the factors' own), with the exact sums for one factor when
    /// <see cref="AnovaInput.Exact"/> is given, and each observation's cell.
    /// </summary>
    public static (CellAnovaInput Cells, int[] CellOf) Cells(AnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        DesignCoding.Validate(input);
        var coding = DesignCoding.Build(input);
        var cellOf = coding.CellOf;
        var counts = coding.CellCounts;
        var start = new int[counts.Length + 1];
        for (var c = 0; c < counts.Length; c++)
        {
            start[c + 1] = start[c] + counts[c];
        }

        // The values gathered cell by cell, in row order within a cell.
        var gathered = new double[input.Response.Length];
        var fill = (int[])start.Clone();
        for (var i = 0; i < cellOf.Length; i++)
        {
            gathered[fill[cellOf[i]]++] = input.Response[i];
        }

        var k = input.Factors.Count;
        var cells = new CellStatistics[counts.Length];
        for (var c = 0; c < counts.Length; c++)
        {
            var codes = new int[k];
            for (var f = 0; f < k; f++)
            {
                codes[f] = coding.Used[f][coding.CellLevels[c][f]];
            }

            cells[c] = CellStatistics.Of(codes, gathered.AsSpan(start[c], counts[c]));
        }

        var cellInput = new CellAnovaInput(
            [.. input.Factors.Select(f => new CellFactor(f.Name, f.Levels))],
            cells,
            input.Interactions,
            input.SsType,
            input.Alpha)
        {
            Exact = k == 1 && input.Exact is { } exact ? ExactSums.Cells(exact, cellOf, counts.Length) : null,
        };
        return (cellInput, cellOf);
    }
}
