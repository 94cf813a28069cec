#!/usr/bin/env python3
"""The work of a one-way benchmark study, done with the Python stack (for tests/bench/versus-python.sh).

Usage: versus-python.py CSV OUTDIR [--response y] [--factor group] [--order run]
                        [--levels g1,g2,...] [--alpha 0.05] [--posthoc] [--figures svg|png]

What it does, as a StudyPress study with `summary`, `anova`, `assumptions` (and `posthoc` with
--posthoc, Tukey) does:

- reads the CSV with pandas;
- group summaries: n, mean, standard deviation, standard error, t interval of the mean, minimum,
  quartiles, median, maximum;
- one-way ANOVA with statsmodels (ordinary least squares from a formula, anova_lm type 2), eta²
  and omega²;
- assumption checks on the residuals: Shapiro–Wilk (SciPy) for 3 <= n <= 5000 only, as StudyPress
  does (SciPy's own documentation says its p-value may be inaccurate above n = 5000);
  Brown–Forsythe (Levene centred on medians), Levene (centred on means) and Bartlett (SciPy);
  Durbin–Watson d in run order (statsmodels; d only, statsmodels gives no p-value); externally
  studentized residuals (closed form from statsmodels' leverages) with a Bonferroni outlier
  test;
- Tukey HSD (statsmodels pairwise_tukeyhsd) with --posthoc;
- the figures StudyPress draws for these blocks, with matplotlib (Agg) to SVG (or PNG): box plots
  with the points, group means with t intervals, the F distribution with the rejection region
  and the observed F, a normal quantile plot with a pointwise beta envelope, a residual histogram
  (Freedman–Diaconis bins) with the normal density and a kernel density estimate, residuals
  against fitted values, and (with --posthoc) the Tukey intervals. Above 5,000 points a figure
  draws 2,000 evenly spaced order statistics (residuals against fitted: every k-th point in data
  order), as StudyPress does;
- writes one HTML page with the tables and the figures (SVG inline, PNG as files beside it).

It prints nothing on success; the shell script times the whole process.
"""
import argparse
import io
import os
import sys

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402
from scipy import stats  # noqa: E402
import statsmodels.formula.api as smf  # noqa: E402
from statsmodels.stats.anova import anova_lm  # noqa: E402
from statsmodels.stats.multicomp import pairwise_tukeyhsd  # noqa: E402
from statsmodels.stats.stattools import durbin_watson  # noqa: E402

MAX_POINTS = 5000
THINNED = 2000


def thin_sorted(sorted_values):
    n = len(sorted_values)
    if n <= MAX_POINTS:
        return sorted_values
    idx = np.round(np.arange(THINNED) * (n - 1) / (THINNED - 1)).astype(np.int64)
    return sorted_values[idx]


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("csv")
    ap.add_argument("out")
    ap.add_argument("--response", default="y")
    ap.add_argument("--factor", default="group")
    ap.add_argument("--order", default="run")
    ap.add_argument("--levels", default="")
    ap.add_argument("--alpha", type=float, default=0.05)
    ap.add_argument("--posthoc", action="store_true")
    ap.add_argument("--figures", choices=["svg", "png"], default="svg")
    a = ap.parse_args()
    os.makedirs(a.out, exist_ok=True)
    alpha = a.alpha

    df = pd.read_csv(a.csv, usecols=[a.order, a.factor, a.response],
                     dtype={a.factor: "category", a.response: "float64"})
    if a.levels:
        df[a.factor] = df[a.factor].cat.reorder_categories(a.levels.split(","), ordered=False)
    y = df[a.response]
    levels = list(df[a.factor].cat.categories)
    groups = [y[df[a.factor] == lv].to_numpy() for lv in levels]

    # Summary.
    g = df.groupby(a.factor, observed=True)[a.response]
    summary = g.agg(["count", "mean", "std", "min", "median", "max"])
    summary["q1"] = g.quantile(0.25)
    summary["q3"] = g.quantile(0.75)
    summary["se"] = summary["std"] / np.sqrt(summary["count"])
    tcrit = stats.t.ppf(1 - alpha / 2, summary["count"] - 1)
    summary["ci_low"] = summary["mean"] - tcrit * summary["se"]
    summary["ci_high"] = summary["mean"] + tcrit * summary["se"]

    # ANOVA.
    model = smf.ols(f"{a.response} ~ C({a.factor})", data=df).fit()
    table = anova_lm(model, typ=2)
    ss_effect = table["sum_sq"].iloc[0]
    ss_res = table["sum_sq"].iloc[1]
    df_effect = table["df"].iloc[0]
    df_res = table["df"].iloc[1]
    ms_res = ss_res / df_res
    f_value = table["F"].iloc[0]
    table["eta2"] = [ss_effect / (ss_effect + ss_res), np.nan]
    table["omega2"] = [(ss_effect - df_effect * ms_res) / (ss_effect + ss_res + ms_res), np.nan]
    resid = model.resid.to_numpy()
    fitted = model.fittedvalues.to_numpy()
    n = len(resid)

    # Assumption checks.
    checks = []
    if 3 <= n <= MAX_POINTS:
        w, p = stats.shapiro(resid)
        checks.append(("Shapiro–Wilk", w, p))
    else:
        checks.append(("Shapiro–Wilk", np.nan, np.nan))  # not run above 5000, as StudyPress
    checks.append(("Brown–Forsythe",) + tuple(stats.levene(*groups, center="median")))
    checks.append(("Levene",) + tuple(stats.levene(*groups, center="mean")))
    checks.append(("Bartlett",) + tuple(stats.bartlett(*groups)))
    order = np.argsort(df[a.order].to_numpy(), kind="stable")
    checks.append(("Durbin–Watson d", durbin_watson(resid[order]), np.nan))
    # Externally studentized residuals from the closed form (statsmodels' outlier_test and
    # OLSInfluence.resid_studentized_external refit per observation: minutes at 10,000 rows).
    h = model.get_influence().hat_matrix_diag
    sse = float(np.dot(resid, resid))
    mse_i = (sse - resid ** 2 / (1 - h)) / (df_res - 1)
    t_ext = resid / np.sqrt(mse_i * (1 - h))
    bonf = np.minimum(1.0, n * 2 * stats.t.sf(np.abs(t_ext), df_res - 1))
    flagged = np.flatnonzero(bonf < alpha)
    checks.append(("largest |t|", float(np.abs(t_ext).max()), float(bonf.min())))
    checks_df = pd.DataFrame(checks, columns=["test", "statistic", "p"])

    tukey = None
    if a.posthoc:
        tukey = pairwise_tukeyhsd(y.to_numpy(), df[a.factor].to_numpy(), alpha=alpha)

    # Figures.
    figures = []

    def save(name, fig):
        if a.figures == "svg":
            buf = io.StringIO()
            fig.savefig(buf, format="svg")
            figures.append((name, buf.getvalue()))
        else:
            path = os.path.join(a.out, name + ".png")
            fig.savefig(path, format="png", dpi=100)
            figures.append((name, f'<img src="{name}.png" alt="{name}">'))
        plt.close(fig)

    sorted_groups = [np.sort(v) for v in groups]
    fig, ax = plt.subplots(figsize=(6.4, 4))
    ax.boxplot(sorted_groups, whis=1.5, showfliers=False)
    for i, s in enumerate(sorted_groups):
        pts = thin_sorted(s)
        ax.plot(np.full(len(pts), i + 1.0), pts, ".", alpha=0.3, markersize=2)
    ax.set_xticks(range(1, len(levels) + 1), levels)
    ax.set_title(f"Distribution of {a.response} by {a.factor}")
    save("box", fig)

    fig, ax = plt.subplots(figsize=(6.4, 4))
    ax.errorbar(range(len(levels)), summary["mean"], yerr=tcrit * summary["se"], fmt="o", capsize=4)
    ax.set_xticks(range(len(levels)), levels)
    ax.set_title("Group means with 95% intervals")
    save("means", fig)

    fig, ax = plt.subplots(figsize=(6.4, 4))
    fcrit = stats.f.ppf(1 - alpha, df_effect, df_res)
    xmax = max(fcrit, f_value) * 1.2
    xs = np.linspace(0, xmax, 400)
    ax.plot(xs, stats.f.pdf(xs, df_effect, df_res))
    tail = xs[xs >= fcrit]
    ax.fill_between(tail, stats.f.pdf(tail, df_effect, df_res), alpha=0.4)
    ax.axvline(f_value, color="k")
    ax.set_title(f"F({df_effect:g}, {df_res:g}) under no effect of {a.factor}")
    save("f-distribution", fig)

    sorted_resid = np.sort(resid)
    m = min(n, THINNED) if n > MAX_POINTS else n
    ranks = np.round(np.arange(m) * (n - 1) / (m - 1)).astype(np.int64) + 1 if n > MAX_POINTS else np.arange(1, n + 1)
    pts = sorted_resid[ranks - 1]
    blom = stats.norm.ppf((ranks - 0.375) / (n + 0.25))
    q1, q3 = np.quantile(resid, [0.25, 0.75])
    z1, z3 = stats.norm.ppf([0.25, 0.75])
    slope = (q3 - q1) / (z3 - z1)
    icpt = q1 - slope * z1
    lo = stats.beta.ppf(alpha / 2, ranks, n + 1 - ranks)
    hi = stats.beta.ppf(1 - alpha / 2, ranks, n + 1 - ranks)
    fig, ax = plt.subplots(figsize=(6.4, 4))
    ax.plot(blom, pts, ".", markersize=2)
    ax.plot(blom, icpt + slope * blom)
    ax.plot(blom, icpt + slope * stats.norm.ppf(lo), ":", color="grey")
    ax.plot(blom, icpt + slope * stats.norm.ppf(hi), ":", color="grey")
    ax.set_title("Normal quantile plot of the residuals")
    save("qq", fig)

    hist_values = thin_sorted(sorted_resid)
    fig, ax = plt.subplots(figsize=(6.4, 4))
    ax.hist(hist_values, bins="fd", density=True, alpha=0.5)
    grid = np.linspace(hist_values[0], hist_values[-1], 200)
    ax.plot(grid, stats.norm.pdf(grid, 0, np.std(resid, ddof=1)))
    ax.plot(grid, stats.gaussian_kde(hist_values, bw_method="silverman")(grid))
    ax.set_title("Histogram of the residuals")
    save("residual-histogram", fig)

    step = max(1, n // THINNED) if n > MAX_POINTS else 1
    fig, ax = plt.subplots(figsize=(6.4, 4))
    ax.plot(fitted[::step], resid[::step], ".", markersize=2)
    ax.axhline(0, color="grey")
    ax.set_title("Residuals against fitted values")
    save("residuals-fitted", fig)

    if tukey is not None:
        ci = tukey.confint
        fig, ax = plt.subplots(figsize=(6.4, 4))
        mid = tukey.meandiffs
        ax.errorbar(mid, range(len(mid)), xerr=[mid - ci[:, 0], ci[:, 1] - mid], fmt="D", capsize=3)
        ax.axvline(0, color="grey")
        ax.set_yticks(range(len(mid)), [f"{p} − {q}" for p, q in zip(tukey.groupsunique[tukey._multicomp.pairindices[0]], tukey.groupsunique[tukey._multicomp.pairindices[1]])])
        ax.set_title("Tukey simultaneous 95% intervals")
        save("intervals", fig)

    # One HTML page.
    parts = ["<!doctype html><meta charset=utf-8><title>Python benchmark</title>",
             "<h1>Summary</h1>", summary.to_html(), "<h1>ANOVA</h1>", table.to_html(),
             "<h1>Assumptions</h1>", checks_df.to_html(index=False),
             f"<p>{len(flagged)} observation(s) flagged as outliers.</p>"]
    if tukey is not None:
        parts += ["<h1>Tukey HSD</h1>", tukey.summary().as_html()]
    for name, body in figures:
        parts.append(f"<figure class=\"{name}\">{body}</figure>")
    with open(os.path.join(a.out, "report.html"), "w", encoding="utf-8") as f:
        f.write("\n".join(parts))
    return 0


if __name__ == "__main__":
    sys.exit(main())
