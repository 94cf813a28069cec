namespace StudyPress.Evaluation;

/// <summary>The names of the statistics in the results manifest (<c>stat</c>): one vocabulary for the manifest, the references, the number formats and the docs. <see cref="ResultSet"/> refuses any other name.</summary>
public static class Stat
{
    /// <summary>Number of observations.</summary>
    public const string N = "n";

    /// <summary>Responses missing in the group.</summary>
    public const string Missing = "missing";

    /// <summary>Arithmetic mean.</summary>
    public const string Mean = "mean";

    /// <summary>Standard deviation (divisor n − 1).</summary>
    public const string Sd = "sd";

    /// <summary>Standard error.</summary>
    public const string Se = "se";

    /// <summary>Lower end of the confidence interval.</summary>
    public const string CiLow = "ci_low";

    /// <summary>Upper end of the confidence interval.</summary>
    public const string CiHigh = "ci_high";

    /// <summary>Median.</summary>
    public const string Median = "median";

    /// <summary>First quartile.</summary>
    public const string Q1 = "q1";

    /// <summary>Third quartile.</summary>
    public const string Q3 = "q3";

    /// <summary>Smallest value.</summary>
    public const string Min = "min";

    /// <summary>Largest value.</summary>
    public const string Max = "max";

    /// <summary>Sum of squares.</summary>
    public const string Ss = "ss";

    /// <summary>Degrees of freedom.</summary>
    public const string Df = "df";

    /// <summary>Mean square.</summary>
    public const string Ms = "ms";

    /// <summary>F statistic.</summary>
    public const string F = "f";

    /// <summary>P-value.</summary>
    public const string P = "p";

    /// <summary>F threshold at α.</summary>
    public const string FCrit = "f_crit";

    /// <summary>Eta squared.</summary>
    public const string Eta2 = "eta2";

    /// <summary>Partial eta squared.</summary>
    public const string PartialEta2 = "partial_eta2";

    /// <summary>Omega squared.</summary>
    public const string Omega2 = "omega2";

    /// <summary>Cohen's f.</summary>
    public const string CohenF = "cohen_f";

    /// <summary>Lower end of the interval of partial eta squared.</summary>
    public const string PartialEta2CiLow = "partial_eta2_ci_low";

    /// <summary>Upper end of the interval of partial eta squared.</summary>
    public const string PartialEta2CiHigh = "partial_eta2_ci_high";

    /// <summary>Least-squares (marginal) mean.</summary>
    public const string LsMean = "ls_mean";

    /// <summary>Box–Cox lambda.</summary>
    public const string Lambda = "lambda";

    /// <summary>Lower end of the interval of lambda.</summary>
    public const string LambdaLow = "lambda_low";

    /// <summary>Upper end of the interval of lambda.</summary>
    public const string LambdaHigh = "lambda_high";

    /// <summary>Numerator degrees of freedom.</summary>
    public const string Df1 = "df1";

    /// <summary>Denominator degrees of freedom.</summary>
    public const string Df2 = "df2";

    /// <summary>Kruskal–Wallis H.</summary>
    public const string H = "h";

    /// <summary>Mean rank.</summary>
    public const string MeanRank = "mean_rank";

    /// <summary>Test statistic.</summary>
    public const string Statistic = "statistic";

    /// <summary>Shapiro–Wilk W.</summary>
    public const string W = "w";

    /// <summary>Durbin–Watson d.</summary>
    public const string D = "d";

    /// <summary>Largest absolute studentized residual.</summary>
    public const string MaxAbsT = "max_abs_t";

    /// <summary>Studentized residual.</summary>
    public const string T = "t";

    /// <summary>Bonferroni-adjusted p-value.</summary>
    public const string PBonferroni = "p_bonferroni";

    /// <summary>Difference (A − B).</summary>
    public const string Diff = "diff";

    /// <summary>Adjusted p-value.</summary>
    public const string PAdj = "p_adj";

    /// <summary>Number of comparisons in the family.</summary>
    public const string M = "m";

    /// <summary>Family-wise error rate without adjustment.</summary>
    public const string FwerUnadjusted = "fwer_unadjusted";

    /// <summary>Power.</summary>
    public const string Power = "power";

    /// <summary>Observations per group.</summary>
    public const string NPerGroup = "n_per_group";

    /// <summary>Total observations.</summary>
    public const string NTotal = "n_total";

    /// <summary>Effect size f.</summary>
    public const string EffectF = "effect_f";

    /// <summary>Rows left out for a missing value.</summary>
    public const string DroppedMissing = "dropped_missing";

    /// <summary>Rows read.</summary>
    public const string Rows = "rows";

    /// <summary>Rows used by some analysis.</summary>
    public const string RowsUsed = "rows_used";

    /// <summary>Chi-square statistic.</summary>
    public const string Chi2 = "chi2";

    /// <summary>Kendall's coefficient of concordance W.</summary>
    public const string KendallW = "kendall_w";

    /// <summary>Number of complete blocks analysed.</summary>
    public const string NBlocks = "n_blocks";

    /// <summary>Blocks left out because a treatment had no value.</summary>
    public const string BlocksDropped = "blocks_dropped";

    /// <summary>Critical difference of mean ranks.</summary>
    public const string Cd = "cd";

    /// <summary>Denominator degrees of freedom of an F test (fractional for a quasi-F or a mixed model).</summary>
    public const string DfDen = "df_den";

    /// <summary>Estimated variance of a random term.</summary>
    public const string Variance = "variance";

    /// <summary>Share of the total variance.</summary>
    public const string Proportion = "proportion";

    /// <summary>Intraclass correlation.</summary>
    public const string Icc = "icc";

    /// <summary>Relative efficiency of blocking.</summary>
    public const string RelativeEfficiency = "relative_efficiency";

    /// <summary>Relative efficiency of blocking, corrected for the error df given to the blocks.</summary>
    public const string RelativeEfficiencyCorrected = "relative_efficiency_df_corrected";

    /// <summary>Unblocked replicates per treatment the blocked layout was worth.</summary>
    public const string EquivalentReplicates = "equivalent_replicates";

    /// <summary>Greenhouse–Geisser epsilon of a within-subject term (repeated measures).</summary>
    public const string EpsilonGg = "epsilon_gg";

    /// <summary>Huynh–Feldt epsilon (Lecoutre's correction) of a within-subject term.</summary>
    public const string EpsilonHf = "epsilon_hf";

    /// <summary>p-value with both df multiplied by the Greenhouse–Geisser epsilon.</summary>
    public const string PGg = "p_gg";

    /// <summary>p-value with both df multiplied by the Huynh–Feldt epsilon.</summary>
    public const string PHf = "p_hf";

    /// <summary>Generalized eta squared (Olejnik and Algina 2003).</summary>
    public const string GeneralizedEta2 = "generalized_eta2";

    /// <summary>Subjects left out of the classical repeated-measures analysis (incomplete).</summary>
    public const string SubjectsDropped = "subjects_dropped";

    /// <summary>Lower equivalence margin of a difference, in response units (equivalence, non-inferiority when higher is better).</summary>
    public const string MarginLow = "margin_low";

    /// <summary>Upper equivalence margin of a difference, in response units (equivalence, non-inferiority when lower is better).</summary>
    public const string MarginHigh = "margin_high";

    /// <summary>One-sided p-value against the lower margin (H0: difference at or below it).</summary>
    public const string PLower = "p_lower";

    /// <summary>One-sided p-value against the upper margin (H0: difference at or above it).</summary>
    public const string PUpper = "p_upper";

    /// <summary>An estimate: a covariate's common slope, or a contrast's Σ c_i × mean_i.</summary>
    public const string Estimate = "estimate";

    /// <summary>Iman–Davenport F of a Friedman test (recorded on the <c>friedman</c> row).</summary>
    public const string FImanDavenport = "f_iman_davenport";

    /// <summary>Numerator degrees of freedom of the Iman–Davenport F, k − 1.</summary>
    public const string Df1ImanDavenport = "df1_iman_davenport";

    /// <summary>Denominator degrees of freedom of the Iman–Davenport F, (k − 1)(n − 1).</summary>
    public const string Df2ImanDavenport = "df2_iman_davenport";

    /// <summary>p-value of the Iman–Davenport F.</summary>
    public const string PImanDavenport = "p_iman_davenport";

    /// <summary>Mean of the values left after trimming each tail (trimmed-means comparison).</summary>
    public const string TrimmedMean = "trimmed_mean";

    /// <summary>Sample variance (divisor n − 1) of the winsorized values.</summary>
    public const string WinsorizedVariance = "winsorized_variance";

    /// <summary>Values left after trimming both tails (h = n − 2g).</summary>
    public const string NEffective = "n_effective";

    /// <summary>Proportion trimmed from each tail.</summary>
    public const string Trim = "trim";

    /// <summary>Stats that are whole numbers (counts, degrees of freedom of exact designs), shown without decimals.</summary>
    public static IReadOnlySet<string> Counts { get; } = new HashSet<string>(StringComparer.Ordinal) { N, Df, Missing, NPerGroup, NTotal, Df1, Df2, M, NBlocks, BlocksDropped, DfDen, SubjectsDropped, Rows, RowsUsed, DroppedMissing, Df1ImanDavenport, Df2ImanDavenport, NEffective };

    /// <summary>Every name, with its meaning (checked against docs/manifest.md by the tests).</summary>
    public static IReadOnlyDictionary<string, string> All { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        [N] = "number of observations",
        [Missing] = "responses missing in the group",
        [Mean] = "arithmetic mean",
        [Sd] = "standard deviation (divisor n − 1)",
        [Se] = "standard error",
        [CiLow] = "lower end of the confidence interval",
        [CiHigh] = "upper end of the confidence interval",
        [Median] = "median",
        [Q1] = "first quartile",
        [Q3] = "third quartile",
        [Min] = "smallest value",
        [Max] = "largest value",
        [Ss] = "sum of squares",
        [Df] = "degrees of freedom",
        [Ms] = "mean square",
        [F] = "F statistic",
        [P] = "p-value",
        [FCrit] = "F threshold at α",
        [Eta2] = "eta squared",
        [PartialEta2] = "partial eta squared",
        [Omega2] = "omega squared",
        [CohenF] = "Cohen's f",
        [PartialEta2CiLow] = "lower end of the interval of partial eta squared",
        [PartialEta2CiHigh] = "upper end of the interval of partial eta squared",
        [LsMean] = "least-squares (marginal) mean",
        [Lambda] = "Box–Cox lambda",
        [LambdaLow] = "lower end of the interval of lambda",
        [LambdaHigh] = "upper end of the interval of lambda",
        [Df1] = "numerator degrees of freedom",
        [Df2] = "denominator degrees of freedom",
        [H] = "Kruskal–Wallis H",
        [MeanRank] = "mean rank",
        [Statistic] = "test statistic",
        [W] = "W statistic (Shapiro–Wilk; Mauchly's W for sphericity)",
        [D] = "Durbin–Watson d",
        [MaxAbsT] = "largest absolute studentized residual",
        [T] = "studentized residual",
        [PBonferroni] = "Bonferroni-adjusted p-value",
        [Diff] = "difference (A − B)",
        [PAdj] = "adjusted p-value",
        [M] = "number of comparisons in the family",
        [FwerUnadjusted] = "family-wise error rate without adjustment",
        [Power] = "power",
        [NPerGroup] = "observations per group",
        [NTotal] = "total observations",
        [EffectF] = "effect size f",
        [DroppedMissing] = "rows left out for a missing value",
        [Rows] = "rows read",
        [RowsUsed] = "rows used by some analysis",
        [Chi2] = "Chi-square statistic",
        [KendallW] = "Kendall's coefficient of concordance W",
        [NBlocks] = "Number of complete blocks analysed",
        [BlocksDropped] = "Blocks left out because a treatment had no value",
        [Cd] = "Critical difference of mean ranks",
        [DfDen] = "denominator degrees of freedom of an F test",
        [Variance] = "estimated variance of a random term",
        [Proportion] = "share of the total variance",
        [Icc] = "intraclass correlation",
        [RelativeEfficiency] = "relative efficiency of blocking",
        [RelativeEfficiencyCorrected] = "relative efficiency of blocking, corrected for error df",
        [EquivalentReplicates] = "unblocked replicates per treatment the blocks were worth",
        [EpsilonGg] = "Greenhouse–Geisser epsilon of a within-subject term",
        [EpsilonHf] = "Huynh–Feldt epsilon (Lecoutre) of a within-subject term",
        [PGg] = "p-value on Greenhouse–Geisser corrected df",
        [PHf] = "p-value on Huynh–Feldt corrected df",
        [GeneralizedEta2] = "generalized eta squared",
        [SubjectsDropped] = "subjects left out of the classical repeated-measures analysis",
        [MarginLow] = "lower equivalence margin, in response units",
        [MarginHigh] = "upper equivalence margin, in response units",
        [PLower] = "one-sided p-value against the lower margin",
        [PUpper] = "one-sided p-value against the upper margin",
        [Estimate] = "estimate (a covariate's common slope, or a contrast's sum of coefficient × level mean)",
        [FImanDavenport] = "Iman–Davenport F of a Friedman test",
        [Df1ImanDavenport] = "numerator degrees of freedom of the Iman–Davenport F",
        [Df2ImanDavenport] = "denominator degrees of freedom of the Iman–Davenport F",
        [PImanDavenport] = "p-value of the Iman–Davenport F",
        [TrimmedMean] = "trimmed mean (mean of the values left after trimming each tail)",
        [WinsorizedVariance] = "winsorized variance (divisor n − 1)",
        [NEffective] = "values left after trimming both tails",
        [Trim] = "proportion trimmed from each tail",
    };
}

/// <summary>The names of the tests in the results manifest (<c>test</c>); see <see cref="Stat"/>.</summary>
public static class TestName
{
    /// <summary>Group summaries.</summary>
    public const string Summary = "summary";

    /// <summary>ANOVA table.</summary>
    public const string Anova = "anova";

    /// <summary>Level means.</summary>
    public const string Means = "means";

    /// <summary>Box–Cox transformation.</summary>
    public const string BoxCox = "box_cox";

    /// <summary>Welch's ANOVA.</summary>
    public const string Welch = "welch";

    /// <summary>Kruskal–Wallis test.</summary>
    public const string KruskalWallis = "kruskal_wallis";

    /// <summary>Brown–Forsythe test of variances.</summary>
    public const string BrownForsythe = "brown_forsythe";

    /// <summary>Levene's test (mean-centred).</summary>
    public const string Levene = "levene";

    /// <summary>Bartlett's test.</summary>
    public const string Bartlett = "bartlett";

    /// <summary>Shapiro–Wilk test of the residuals.</summary>
    public const string ShapiroWilk = "shapiro_wilk";

    /// <summary>Durbin–Watson test of the residuals in run order.</summary>
    public const string DurbinWatson = "durbin_watson";

    /// <summary>Studentized-residual outlier test.</summary>
    public const string Outliers = "outliers";

    /// <summary>Tukey HSD.</summary>
    public const string TukeyHsd = "tukey_hsd";

    /// <summary>Games–Howell.</summary>
    public const string GamesHowell = "games_howell";

    /// <summary>Holm-adjusted t tests.</summary>
    public const string Holm = "holm";

    /// <summary>Bonferroni-adjusted t tests.</summary>
    public const string Bonferroni = "bonferroni";

    /// <summary>Dunnett's comparisons with a control.</summary>
    public const string Dunnett = "dunnett";

    /// <summary>Dunn's test after Kruskal–Wallis.</summary>
    public const string Dunn = "dunn";

    /// <summary>The family of comparisons.</summary>
    public const string Family = "family";

    /// <summary>Power and sample size.</summary>
    public const string Power = "power";

    /// <summary>The design a methods block describes.</summary>
    public const string Design = "design";

    /// <summary>An input dataset.</summary>
    public const string Input = "input";

    /// <summary>Friedman rank test for complete blocks.</summary>
    public const string Friedman = "friedman";

    /// <summary>Conover's comparisons after a Friedman test.</summary>
    public const string Conover = "conover";

    /// <summary>Nemenyi's comparisons after a Friedman test.</summary>
    public const string Nemenyi = "nemenyi";

    /// <summary>Variance components of the random terms.</summary>
    public const string VarianceComponents = "variance_components";

    /// <summary>Intraclass correlation.</summary>
    public const string Icc = "icc";

    /// <summary>Relative efficiency of blocking.</summary>
    public const string BlockingEfficiency = "blocking_efficiency";

    /// <summary>Mauchly's test of sphericity of a within-subject term.</summary>
    public const string Mauchly = "mauchly";

    /// <summary>F tests of the mixed-model route of a repeated-measures block (REML, Satterthwaite df).</summary>
    public const string AnovaReml = "anova_reml";

    /// <summary>Simple effects of a factor at each level of another (a within-subject factor at each level of a between-subject factor; a marginal-means block's factor at each level of its 'at' factor).</summary>
    public const string SimpleEffects = "simple_effects";

    /// <summary>Subjects of a repeated-measures block: analysed and left out.</summary>
    public const string Subjects = "subjects";

    /// <summary>Equivalence (two one-sided tests) or non-inferiority of a difference of two level means.</summary>
    public const string Equivalence = "equivalence";

    /// <summary>A covariate's common slope in an analysis of covariance.</summary>
    public const string CovariateSlope = "covariate_slope";

    /// <summary>The homogeneity-of-slopes test (treatment x covariate).</summary>
    public const string SlopesHomogeneity = "slopes_homogeneity";

    /// <summary>Estimated marginal means (equally weighted over the other factors; adjusted to the covariate means in an analysis of covariance), with SE and interval.</summary>
    public const string Emmeans = "emmeans";

    /// <summary>A planned contrast or polynomial trend of one factor's level means.</summary>
    public const string Contrast = "contrast";

    /// <summary>Holm-adjusted comparisons of a repeated block's within-subject levels from the mixed model's (REML) marginal means.</summary>
    public const string HolmReml = "holm_reml";

    /// <summary>Bonferroni-adjusted comparisons of a repeated block's within-subject levels from the mixed model's (REML) marginal means.</summary>
    public const string BonferroniReml = "bonferroni_reml";

    /// <summary>The heteroscedastic comparison of trimmed means (Yuen; Welch's method on trimmed means).</summary>
    public const string TrimmedMeans = "trimmed_means";

    /// <summary>Every name, with its meaning (checked against docs/manifest.md by the tests).</summary>
    public static IReadOnlyDictionary<string, string> All { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        [Summary] = "group summaries",
        [Anova] = "ANOVA table",
        [Means] = "level means",
        [BoxCox] = "Box–Cox transformation",
        [Welch] = "Welch's ANOVA",
        [KruskalWallis] = "Kruskal–Wallis test",
        [BrownForsythe] = "Brown–Forsythe test of variances",
        [Levene] = "Levene's test (mean-centred)",
        [Bartlett] = "Bartlett's test",
        [ShapiroWilk] = "Shapiro–Wilk test of the residuals",
        [DurbinWatson] = "Durbin–Watson test of the residuals in run order",
        [Outliers] = "studentized-residual outlier test",
        [TukeyHsd] = "Tukey HSD",
        [GamesHowell] = "Games–Howell",
        [Holm] = "Holm-adjusted t tests",
        [Bonferroni] = "Bonferroni-adjusted t tests",
        [Dunnett] = "Dunnett's comparisons with a control",
        [Dunn] = "Dunn's test after Kruskal–Wallis",
        [Family] = "the family of comparisons",
        [Power] = "power and sample size",
        [Design] = "the design a methods block describes",
        [Input] = "an input dataset",
        [Friedman] = "Friedman rank test for complete blocks",
        [Conover] = "Conover's comparisons after a Friedman test",
        [Nemenyi] = "Nemenyi's comparisons after a Friedman test",
        [VarianceComponents] = "variance components of the random terms",
        [Icc] = "intraclass correlation",
        [BlockingEfficiency] = "relative efficiency of blocking",
        [Mauchly] = "Mauchly's test of sphericity",
        [AnovaReml] = "mixed-model (REML) F tests of a repeated-measures block",
        [SimpleEffects] = "simple effects of a factor at each level of another",
        [Subjects] = "subjects analysed and left out",
        [Equivalence] = "equivalence (TOST) or non-inferiority of a difference of means",
        [CovariateSlope] = "a covariate's common slope in an analysis of covariance",
        [SlopesHomogeneity] = "homogeneity-of-slopes test (treatment x covariate interaction)",
        [Contrast] = "planned contrast or polynomial trend of level means",
        [Emmeans] = "estimated marginal means (adjusted to the covariate means in an analysis of covariance)",
        [HolmReml] = "Holm-adjusted comparisons of within-subject levels from the mixed model's marginal means",
        [BonferroniReml] = "Bonferroni-adjusted comparisons of within-subject levels from the mixed model's marginal means",
        [TrimmedMeans] = "heteroscedastic comparison of trimmed means (Yuen; Welch's method on trimmed means)",
    };
}
