using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics;
using StudyPress.Statistics.Designs;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>anova</c>: fixed-effects ANOVA by least squares, one-way or factorial (SS type 1, 2 or 3),
/// with an optional response transformation; ANOVA table (SS, df, MS, F, p), critical F at alpha,
/// effect sizes (eta², partial eta², omega², Cohen's f), level means, and for one factor Welch's F
/// (always with <c>welch: yes</c>; with <c>auto</c> when Brown–Forsythe finds unequal variances) and
/// Kruskal–Wallis (with <c>auto</c> when residuals are non-normal and groups small).
/// </summary>
public sealed class AnovaKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new AnovaKind());

    public override string Name => "anova";

    public override bool NeedsRows => false;

    public override string PrimaryTest => "anova";

    public override IReadOnlyList<string> OwnKeys { get; } = ["interaction", "ss-type", "transform", "welch", "fit", "covariates"];

    private static readonly Dictionary<string, TransformKind> Transforms = new(StringComparer.Ordinal)
    {
        ["none"] = TransformKind.None,
        ["log"] = TransformKind.Log,
        ["log10"] = TransformKind.Log10,
        ["sqrt"] = TransformKind.Sqrt,
        ["reciprocal"] = TransformKind.Reciprocal,
        ["box-cox"] = TransformKind.BoxCox,
    };

    /// <param name="Fit">
    /// For a study whose header declares a layout (blocks, plots, random or nested factors): <c>auto</c>
    /// (the classical strata when the data are balanced, else the mixed model by REML),
    /// <c>classical</c> (strata only; unbalanced data are an error at the key) or <c>reml</c>.
    /// </param>
    public sealed record Options(bool Interaction, SumOfSquaresType SsType, string TransformName, TransformKind Transform, string Welch, string Fit = "auto")
    {
        /// <summary>Where <c>fit</c> was written (the block's location when it was not).</summary>
        public SourceLocation? FitLocation { get; init; }

        /// <summary>
        /// The numeric covariates (<c>covariates</c>), each with where it is named: empty for a plain
        /// ANOVA; otherwise the block is an analysis of covariance (see docs/analyses.md).
        /// </summary>
        public IReadOnlyList<(string Column, SourceLocation At)> Covariates { get; init; } = [];

        /// <summary>Where <c>covariates</c> was written (the block's location when it was not).</summary>
        public SourceLocation CovariatesLocation { get; init; }

        /// <summary>Whether the block is an analysis of covariance.</summary>
        public bool HasCovariates => Covariates.Count > 0;
    }

    public override IEnumerable<(string Column, SourceLocation At)> NumericRead(object? options) =>
        options is Options o ? o.Covariates : [];

    /// <summary>
    /// The checks of <c>covariates</c> that need the bound block (its response, factors and
    /// dataset): a covariate may not be the response or a factor; the header's layout may declare
    /// blocks only (fitted as additive fixed blocks), not random, nested or plot factors; the
    /// dataset may not be aggregated by the database.
    /// </summary>
    public override void CheckBound(BoundBlock block, StudyHeader header, DiagnosticBag diagnostics)
    {
        if (block.Options is not Options { HasCovariates: true } o)
        {
            return;
        }

        foreach (var (column, at) in o.Covariates)
        {
            if (string.Equals(column, block.Response, StringComparison.Ordinal))
            {
                diagnostics.CovariateName(at, column, "the block's response");
                return;
            }

            if (block.Factors.Any(f => string.Equals(f.Name, column, StringComparison.Ordinal)))
            {
                diagnostics.CovariateName(at, column, "a factor of the block");
                return;
            }
        }

        foreach (var f in block.Factors.Where(f => f.Layout.IsDeclared))
        {
            var layout = f.Layout;
            if (layout.Role != FactorRole.Block || layout.Plot != PlotLevel.Unit || layout.Within.Count > 0 || layout.NamesWholePlots)
            {
                diagnostics.CovariatesOnLayout(o.CovariatesLocation, f.Name, "is declared random, nested or on a plot level, and the analysis of covariance is fitted by least squares with fixed factors and additive blocks only (the strata and mixed-model routes take no covariate in this version)");
                return;
            }
        }

        var blocks = block.Factors.Count(f => f.Layout.Role == FactorRole.Block);
        if (blocks > 0 && block.Factors.Count - blocks > 1 && o.Interaction)
        {
            diagnostics.CovariatesOnLayout(o.CovariatesLocation, block.Factors.First(f => f.Layout.Role == FactorRole.Block).Name, "is a block, which the analysis of covariance takes additively, and with several treatments their interactions beside blocks are not available in this version; write 'interaction: false'");
            return;
        }

        if (block.Data is { } data && header.Datasets.FirstOrDefault(d => d.Name == data) is { Aggregate: true })
        {
            diagnostics.CovariatesOnAggregate(o.CovariatesLocation, data);
        }
    }

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var ss = keys.Integer("ss-type", 1, 3) ?? 2;
        var transform = keys.Choice("transform", [.. Transforms.Keys]) ?? "none";
        var welch = keys.Choice("welch", ["auto", "yes", "no"]) ?? "auto";
        var covariates = BindCovariates(keys, ss, transform, welch, diagnostics);
        return new Options(
            keys.Boolean("interaction") ?? true,
            (SumOfSquaresType)ss,
            transform,
            Transforms[transform],
            welch,
            keys.Choice("fit", ["auto", "classical", "reml"]) ?? "auto")
        {
            FitLocation = keys.Has("fit") ? keys.KeyLocation("fit") : null,
            Covariates = covariates,
            CovariatesLocation = keys.Has("covariates") ? keys.KeyLocation("covariates") : keys.Map.Location,
        };
    }

    /// <summary>
    /// Reads <c>covariates</c> (one column name or a list) and refuses the keys it cannot be
    /// combined with, each once, at <c>covariates</c>: <c>welch: yes</c>, a transform, SS type 1,
    /// <c>fit</c> (which chooses among the design routes).
    /// </summary>
    private static IReadOnlyList<(string Column, SourceLocation At)> BindCovariates(KeyReader keys, int ss, string transform, string welch, DiagnosticBag diagnostics)
    {
        if (!keys.Has("covariates"))
        {
            return [];
        }

        var at = keys.KeyLocation("covariates");
        if (keys.ScalarList("covariates") is not { } list)
        {
            return [];
        }

        if (list.Count == 0)
        {
            diagnostics.CovariatesEmpty(at);
            return [];
        }

        var seen = new HashSet<string>(StringComparer.Ordinal);
        foreach (var c in list)
        {
            if (!seen.Add(c.Value))
            {
                diagnostics.CovariateName(c.Location, c.Value, "listed twice");
                return [];
            }
        }

        if (welch == "yes")
        {
            diagnostics.CovariatesWith(at, "welch: yes", "Welch's F compares the raw group means allowing unequal variances and has no covariance adjustment; remove 'welch' (the adjusted table uses the pooled residual, whose checks an assumptions block reports)");
            return [];
        }

        if (transform != "none")
        {
            diagnostics.CovariatesWith(at, "transform: " + transform, "adjusted means on a transformed scale do not back-transform to adjusted means of the response, and the slope would be on the transformed scale; analyse the response as it is, or transform it in the data with a covariate that suits that scale");
            return [];
        }

        if (ss == 1)
        {
            diagnostics.CovariatesWith(at, "ss-type: 1", "sequential sums of squares depend on whether the covariate is entered before or after the factors; the analysis of covariance adjusts each factor term for the covariates (type 2, the default, or type 3)");
            return [];
        }

        if (keys.Has("fit"))
        {
            diagnostics.CovariatesWith(at, "fit", "'fit' chooses between the strata and the mixed model of a declared layout, and the analysis of covariance is fitted by least squares only; remove 'fit'");
            return [];
        }

        return [.. list.Select(c => (c.Value, c.Location))];
    }
}
