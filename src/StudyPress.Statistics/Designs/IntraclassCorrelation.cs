namespace StudyPress.Statistics.Designs;

/// <summary>
/// One intraclass correlation form of Shrout and Fleiss (1979): <paramref name="Name"/> is
/// "ICC(1,1)" .. "ICC(3,k)" with k the number of raters written as a number; its F test of
/// ICC = 0 on (<paramref name="Df1"/>, <paramref name="Df2"/>) df and its interval.
/// </summary>
public sealed record IccForm(
    string Name,
    int Model,
    bool OfMean,
    Quantity Icc,
    Quantity CiLow,
    Quantity CiHigh,
    Quantity F,
    double Df1,
    double Df2,
    Quantity P);

/// <summary>The six forms for n targets rated by the same k raters, with the mean squares used.</summary>
public sealed record IccResult(
    int Targets,
    int Raters,
    double Bms,
    double Wms,
    double Jms,
    double Ems,
    double Confidence,
    IReadOnlyList<IccForm> Forms)
{
    /// <summary>The form named <paramref name="name"/>, e.g. "ICC(2,1)" or "ICC(3,4)".</summary>
    public IccForm Form(string name) =>
        Forms.FirstOrDefault(f => string.Equals(f.Name, name, StringComparison.Ordinal))
        ?? throw new KeyNotFoundException("no form " + name);
}

/// <summary>
/// Intraclass correlations of Shrout and Fleiss (1979, "Intraclass correlations: uses in
/// assessing rater reliability", Psychological Bulletin 86, 420-428) from the mean squares of a
/// targets x raters layout with one rating per cell: BMS between targets, WMS within targets
/// (one-way), JMS between raters, EMS residual (two-way).
/// ICC(1,1) = (BMS − WMS)/(BMS + (k−1) WMS); ICC(2,1) = (BMS − EMS)/(BMS + (k−1) EMS + k (JMS − EMS)/n);
/// ICC(3,1) = (BMS − EMS)/(BMS + (k−1) EMS); ICC(1,k) = (BMS − WMS)/BMS;
/// ICC(2,k) = (BMS − EMS)/(BMS + (JMS − EMS)/n); ICC(3,k) = (BMS − EMS)/BMS.
/// <para>
/// Intervals as given by Shrout and Fleiss (1979): for ICC(1,·) and ICC(3,·) from F = BMS/WMS
/// (resp. BMS/EMS): F_L = F / F_{α/2}(df1, df2), F_U = F · F_{α/2}(df2, df1), single rater
/// (F_L − 1)/(F_L + k − 1) .. (F_U − 1)/(F_U + k − 1), mean of k raters 1 − 1/F_L .. 1 − 1/F_U.
/// ICC(2,1) by their Satterthwaite construction: ν = (a JMS + b EMS)² / ((a JMS)²/(k−1) +
/// (b EMS)²/((n−1)(k−1))) with a = kρ/(n(1−ρ)), b = 1 + kρ(n−1)/(n(1−ρ)), ρ = ICC(2,1);
/// lower n(BMS − F* EMS)/(F*(k JMS + (kn − k − n) EMS) + n BMS) with F* = F_{α/2}(n−1, ν); upper
/// n(F* BMS − EMS)/(k JMS + (kn − k − n) EMS + n F* BMS) with F* = F_{α/2}(ν, n−1). ICC(2,k)'s
/// limits are ICC(2,1)'s stepped up by Spearman-Brown, kL/(1 + (k−1)L) (McGraw and Wong 1996,
/// Psychological Methods 1, 30-46, Table 7). F_{p}(d1, d2) is the upper p quantile.
/// </para>
/// </summary>
public static class IntraclassCorrelation
{
    /// <summary>
    /// The six forms from a complete targets x raters table (<paramref name="ratings"/>[target][rater]),
    /// through the strata ANOVA with targets and raters random.
    /// </summary>
    public static IccResult FromRatings(IReadOnlyList<double[]> ratings, double confidence = 0.95)
    {
        ArgumentNullException.ThrowIfNull(ratings);
        var n = ratings.Count;
        if (n < 2)
        {
            throw new ArgumentException("at least two targets are needed", nameof(ratings));
        }

        var k = ratings[0].Length;
        if (k < 2 || ratings.Any(r => r.Length != k))
        {
            throw new ArgumentException("every target needs the same number (at least two) of ratings", nameof(ratings));
        }

        var y = new double[n * k];
        var targets = new string[n * k];
        var raters = new string[n * k];
        for (var i = 0; i < n; i++)
        {
            for (var j = 0; j < k; j++)
            {
                y[(i * k) + j] = ratings[i][j];
                targets[(i * k) + j] = "t" + i.ToString(System.Globalization.CultureInfo.InvariantCulture);
                raters[(i * k) + j] = "r" + j.ToString(System.Globalization.CultureInfo.InvariantCulture);
            }
        }

        var two = StrataAnova.Fit([DesignFactor.Random("target"), DesignFactor.Random("rater")], new DesignData(y, [targets, raters]));
        var bms = two.Row("target").MeanSquare.Value;
        var jms = two.Row("rater").MeanSquare.Value;
        var ems = two.Row("target:rater").MeanSquare.Value;
        var wms = (two.Row("rater").SumOfSquares + two.Row("target:rater").SumOfSquares) / (n * (k - 1));
        return FromMeanSquares(n, k, bms, wms, jms, ems, confidence);
    }

    /// <summary>The six forms from the mean squares of n targets and k raters.</summary>
    public static IccResult FromMeanSquares(int n, int k, double bms, double wms, double jms, double ems, double confidence = 0.95)
    {
        if (n < 2 || k < 2)
        {
            throw new ArgumentException("at least two targets and two raters are needed", nameof(n));
        }

        if (!(confidence > 0 && confidence < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(confidence), "confidence must be between 0 and 1");
        }

        var a2 = (1 - confidence) / 2;
        var df1 = n - 1.0;
        var dfW = n * (k - 1.0);
        var dfE = (n - 1.0) * (k - 1.0);
        var ks = k.ToString(System.Globalization.CultureInfo.InvariantCulture);
        var forms = new List<IccForm>();

        // Model 1: one-way random.
        var f1 = Ratio(bms, wms);
        var (l1, u1) = FBounds(f1, df1, dfW, a2);
        forms.Add(Form("ICC(1,1)", 1, false, Ratio(bms - wms, bms + ((k - 1) * wms)), l1.Map(x => (x - 1) / (x + k - 1)), u1.Map(x => (x - 1) / (x + k - 1)), f1, df1, dfW));

        // Model 2: two-way random.
        var icc2 = Ratio(bms - ems, bms + ((k - 1) * ems) + (k * (jms - ems) / n));
        var (l2, u2) = Model2Bounds(icc2, n, k, bms, jms, ems, a2);
        var f3 = Ratio(bms, ems);
        forms.Add(Form("ICC(2,1)", 2, false, icc2, l2, u2, f3, df1, dfE));

        // Model 3: two-way mixed (raters fixed).
        var (l3, u3) = FBounds(f3, df1, dfE, a2);
        forms.Add(Form("ICC(3,1)", 3, false, Ratio(bms - ems, bms + ((k - 1) * ems)), l3.Map(x => (x - 1) / (x + k - 1)), u3.Map(x => (x - 1) / (x + k - 1)), f3, df1, dfE));

        // Means of k raters.
        forms.Add(Form("ICC(1," + ks + ")", 1, true, Ratio(bms - wms, bms), l1.Map(x => 1 - (1 / x)), u1.Map(x => 1 - (1 / x)), f1, df1, dfW));
        forms.Add(Form("ICC(2," + ks + ")", 2, true, Ratio(bms - ems, bms + ((jms - ems) / n)), l2.Map(x => k * x / (1 + ((k - 1) * x))), u2.Map(x => k * x / (1 + ((k - 1) * x))), f3, df1, dfE));
        forms.Add(Form("ICC(3," + ks + ")", 3, true, Ratio(bms - ems, bms), l3.Map(x => 1 - (1 / x)), u3.Map(x => 1 - (1 / x)), f3, df1, dfE));
        return new IccResult(n, k, bms, wms, jms, ems, confidence, forms);
    }

    private static IccForm Form(string name, int model, bool mean, Quantity icc, Quantity lo, Quantity hi, Quantity f, double df1, double df2)
    {
        var p = f.IsDefined ? Quantity.Of(Probability.FUpper(f.Value, df1, df2)) : f;
        return new IccForm(name, model, mean, icc, lo, hi, f, df1, df2, p);
    }

    private static Quantity Ratio(double a, double b) =>
        b == 0 ? Quantity.Undefined("the mean squares are zero (all ratings equal)") : Quantity.Of(a / b);

    private static (Quantity Low, Quantity High) FBounds(Quantity f, double df1, double df2, double a2)
    {
        if (!f.IsDefined)
        {
            return (f, f);
        }

        return (Quantity.Of(f.Value / Probability.FCritical(a2, df1, df2)), Quantity.Of(f.Value * Probability.FCritical(a2, df2, df1)));
    }

    private static (Quantity Low, Quantity High) Model2Bounds(Quantity icc, int n, int k, double bms, double jms, double ems, double a2)
    {
        if (!icc.IsDefined || !(icc.Value < 1))
        {
            var why = Quantity.Undefined("the interval of ICC(2,1) is not defined for these mean squares");
            return (why, why);
        }

        var rho = icc.Value;
        var a = k * rho / (n * (1 - rho));
        var b = 1 + (k * rho * (n - 1) / (n * (1 - rho)));
        var num = (a * jms) + (b * ems);
        var den = ((a * jms) * (a * jms) / (k - 1)) + ((b * ems) * (b * ems) / ((n - 1.0) * (k - 1)));
        if (!(num > 0 && den > 0))
        {
            var why = Quantity.Undefined("the Satterthwaite df of ICC(2,1) is not defined for these mean squares");
            return (why, why);
        }

        var v = num * num / den;
        var fl = Probability.FCritical(a2, n - 1, v);
        var fu = Probability.FCritical(a2, v, n - 1);
        var c = (k * jms) + (((k * n) - k - n) * ems);
        var lo = n * (bms - (fl * ems)) / ((fl * c) + (n * bms));
        var hi = n * ((fu * bms) - ems) / (c + (n * fu * bms));
        return (Quantity.Of(lo), Quantity.Of(hi));
    }
}
