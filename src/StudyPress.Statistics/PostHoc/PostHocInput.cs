namespace StudyPress.Statistics.PostHoc;

/// <summary>Input checks and pair enumeration shared by the post-hoc procedures of this folder.</summary>
internal static class PostHocInput
{
    public static void Validate(IReadOnlyList<string> levels, IReadOnlyList<double[]> groups, double alpha)
    {
        if (levels.Count != groups.Count)
        {
            throw new ArgumentException("levels and groups differ in number", nameof(levels));
        }

        Groups.RequireGroups(groups);
        foreach (var g in groups)
        {
            foreach (var v in g)
            {
                if (!double.IsFinite(v))
                {
                    throw new ArgumentException("a value is not finite", nameof(groups));
                }
            }
        }

        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in (0, 1)");
        }
    }

    /// <summary>
    /// All pairs (i, j), i &lt; j, in level order; or, with a control, (i, control) for every other
    /// level i in level order.
    /// </summary>
    public static List<(int A, int B)> Pairs(IReadOnlyList<string> levels, string? control)
    {
        var pairs = new List<(int, int)>();
        if (control is null)
        {
            for (var i = 0; i < levels.Count; i++)
            {
                for (var j = i + 1; j < levels.Count; j++)
                {
                    pairs.Add((i, j));
                }
            }

            return pairs;
        }

        var c = ControlIndex(levels, control);
        for (var i = 0; i < levels.Count; i++)
        {
            if (i != c)
            {
                pairs.Add((i, c));
            }
        }

        return pairs;
    }

    public static int ControlIndex(IReadOnlyList<string> levels, string control)
    {
        for (var i = 0; i < levels.Count; i++)
        {
            if (string.Equals(levels[i], control, StringComparison.Ordinal))
            {
                return i;
            }
        }

        throw new ArgumentException("the control is not one of the levels", nameof(control));
    }

    /// <summary>Why a pooled-variance comparison is not defined, or null when it is.</summary>
    public static string? VarianceProblem(double msResidual, int dfResidual)
    {
        if (dfResidual <= 0)
        {
            return "there are no residual degrees of freedom, so the pooled variance is not estimated";
        }

        if (!double.IsFinite(msResidual))
        {
            return "the residual mean square is not finite";
        }

        if (msResidual <= 0)
        {
            return "the residual mean square is zero (no variation within groups), so the standard errors are zero";
        }

        return null;
    }
}
