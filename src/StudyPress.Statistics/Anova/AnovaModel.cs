namespace StudyPress.Statistics.Anova;

/// <summary>Which sums of squares the ANOVA table reports for each term.</summary>
public enum SumOfSquaresType
{
    /// <summary>Type 1: each term adjusted for the terms before it, in model order.</summary>
    Sequential = 1,

    /// <summary>Type 2: each term adjusted for every term that does not contain it.</summary>
    Hierarchical = 2,

    /// <summary>Type 3: each term adjusted for every other term, under sum-to-zero coding.</summary>
    Marginal = 3,
}

/// <summary>
/// One categorical factor: a level code per observation (0 .. Levels.Count - 1), in the same order
/// as the response.
/// </summary>
public sealed record FactorColumn(string Name, int[] Codes, IReadOnlyList<string> Levels);

/// <summary>
/// Input of a fixed-effects ANOVA. The response is expected to be centred already (the compiler
/// subtracts an exact decimal centre before converting to double); ANOVA is shift-invariant, so
/// only means need the centre added back.
/// </summary>
public sealed record AnovaInput(
    double[] Response,
    IReadOnlyList<FactorColumn> Factors,
    bool Interactions,
    SumOfSquaresType SsType,
    double Alpha)
{
    /// <summary>
    /// The response's exact decimal values (same order), when known and untransformed; one-factor
    /// models then compute their sums of squares exactly (<see cref="ExactSums.OneWay(ScaledIntegers, int[], int)"/>).
    /// </summary>
    public ScaledIntegers? Exact { get; init; }
}

/// <summary>One row of the ANOVA table for a model term (a factor or an interaction).</summary>
/// <param name="Name">Term name: the factor name, or factor names joined by ':' for an interaction.</param>
/// <param name="Factors">The factors the term is made of.</param>
public sealed record AnovaTerm(
    string Name,
    IReadOnlyList<string> Factors,
    double SumOfSquares,
    int Df,
    Quantity MeanSquare,
    Quantity F,
    Quantity P,
    Quantity FCritical,
    Quantity EtaSquared,
    Quantity PartialEtaSquared,
    Quantity OmegaSquared,
    Quantity CohenF);

/// <summary>
/// A fitted ANOVA model: the table plus per-observation fitted values, residuals and leverages
/// (hat-matrix diagonal), all in the order of the input response.
/// </summary>
public sealed record AnovaResult(
    IReadOnlyList<AnovaTerm> Terms,
    double ResidualSumOfSquares,
    int ResidualDf,
    Quantity ResidualMeanSquare,
    double TotalSumOfSquares,
    int TotalDf,
    IReadOnlyList<double> Fitted,
    double[] Residuals,
    IReadOnlyList<double> Leverages,
    SumOfSquaresType SsType,
    double Alpha);
