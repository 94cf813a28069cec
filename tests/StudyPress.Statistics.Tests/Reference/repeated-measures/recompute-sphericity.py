"""Independent recomputation of Mauchly's W, the epsilons and the classical F tests for the
repeated-measures reference data, with numpy (linear algebra) and scipy (tail probabilities).

This is the project's own check, not an outside source. It differs from the engine on purpose:
orthonormal POLYNOMIAL contrasts from a QR of the Vandermonde matrix (the engine uses Helmert),
covariance matrices from numpy.cov per group (the engine pools SSCP), W from numpy.linalg.det,
epsilons from traces of the covariance (the engine uses eigenvalues), and F tests from explicit
cell means (the engine uses contrast scores).

Run from this folder: /usr/bin/python3 recompute-sphericity.py > recompute-sphericity.out.json
"""
import csv
import json

import numpy as np
import scipy
from scipy import stats


def read(name):
    with open(name, newline="") as f:
        return list(csv.DictReader(f))


def poly(k):
    """k x (k-1) orthonormal polynomial contrasts."""
    x = np.arange(1, k + 1, dtype=float)
    v = np.vander(x, k, increasing=True)
    q, _ = np.linalg.qr(v)
    return q[:, 1:]


def sphericity(scores_by_group):
    """scores_by_group: list of (n_g x p) arrays of contrast scores."""
    n = sum(s.shape[0] for s in scores_by_group)
    g = len(scores_by_group)
    p = scores_by_group[0].shape[1]
    nu = n - g
    s = sum((sg.shape[0] - 1) * np.atleast_2d(np.cov(sg, rowvar=False)) for sg in scores_by_group) / nu
    w = np.linalg.det(s) / (np.trace(s) / p) ** p
    chi = -(nu - (2 * p * p + p + 2) / (6 * p)) * np.log(w)
    df = p * (p + 1) // 2 - 1
    gg = np.trace(s) ** 2 / (p * np.trace(s @ s))
    hf_lecoutre = ((nu + 1) * p * gg - 2) / (p * (nu - p * gg))
    hf_original = (n * p * gg - 2) / (p * (nu - p * gg))
    return {
        "n": n, "groups": g, "p": p, "nu": nu,
        "mauchly_w": w, "chi_square": chi, "chi_square_df": df, "chi_square_p": stats.chi2.sf(chi, df),
        "epsilon_gg": gg, "epsilon_hf_lecoutre": min(1.0, hf_lecoutre), "epsilon_hf_original_uncapped": hf_original,
    }


def corrected(f, df1, df2, eps):
    return stats.f.sf(f, eps * df1, eps * df2)


def fmt(d):
    out = {}
    for k, v in d.items():
        if isinstance(v, dict):
            out[k] = fmt(v)
        elif isinstance(v, (int, np.integer)):
            out[k] = str(int(v))
        else:
            out[k] = "%.12g" % float(v)
    return out


result = {
    "tool": "numpy %s, scipy %s" % (np.__version__, scipy.__version__),
    "status": "project recomputation (numpy), independent of the engine's code; not published",
}

# 1. Rutherford one-way: 8 subjects x 3 conditions.
rows = read("rutherford-2001-oneway.csv")
subjects = sorted({r["subject"] for r in rows}, key=int)
conds = ["a", "b", "c"]
y = np.array([[float(next(r["y"] for r in rows if r["subject"] == s and r["condition"] == c)) for c in conds] for s in subjects])
result["rutherford_oneway_condition"] = fmt(sphericity([y @ poly(3)]))

# 2. Rutherford two-way: A (2) x B (3) within, 8 subjects. Cells in A-major order.
rows = read("rutherford-2001-twoway.csv")
subjects = sorted({r["subject"] for r in rows}, key=int)
cells = [(a, b) for a in ["A1", "A2"] for b in ["B1", "B2", "B3"]]
y2 = np.array([[float(next(r["y"] for r in rows if r["subject"] == s and (r["A"], r["B"]) == c)) for c in cells] for s in subjects])
one2 = np.ones((2, 1)) / np.sqrt(2)
one3 = np.ones((3, 1)) / np.sqrt(3)
result["rutherford_twoway_B"] = fmt(sphericity([y2 @ np.kron(one2, poly(3))]))
result["rutherford_twoway_AB"] = fmt(sphericity([y2 @ np.kron(poly(2), poly(3))]))


def mixed(groups):
    """groups: list of (n_g x 3) arrays (subjects x B levels), A between. F tests from cell means."""
    n = sum(x.shape[0] for x in groups)
    g = len(groups)
    b = 3
    allx = np.vstack(groups)
    grand = allx.mean()
    # Type 2 (weighted) SS of B; A x B as weighted between-groups SS of the contrast scores.
    ss_b = n * np.sum((allx.mean(axis=0) - grand) ** 2)
    ss_ab = sum(x.shape[0] * np.sum((x.mean(axis=0) - x.mean() - (allx.mean(axis=0) - grand)) ** 2) for x in groups)
    ss_err = sum(np.sum((x - x.mean(axis=1, keepdims=True) - x.mean(axis=0, keepdims=True) + x.mean()) ** 2) for x in groups)
    df_b, df_ab, df_err = b - 1, (g - 1) * (b - 1), (n - g) * (b - 1)
    sph = sphericity([x @ poly(3) for x in groups])
    f_b = (ss_b / df_b) / (ss_err / df_err)
    f_ab = (ss_ab / df_ab) / (ss_err / df_err)
    out = {"sphericity_B": sph}
    out["B"] = {"ss": ss_b, "df": df_b, "f": f_b, "p": stats.f.sf(f_b, df_b, df_err),
                "p_gg": corrected(f_b, df_b, df_err, sph["epsilon_gg"]),
                "p_hf": corrected(f_b, df_b, df_err, sph["epsilon_hf_lecoutre"])}
    out["A:B"] = {"ss": ss_ab, "df": df_ab, "f": f_ab, "p": stats.f.sf(f_ab, df_ab, df_err),
                  "p_gg": corrected(f_ab, df_ab, df_err, sph["epsilon_gg"]),
                  "p_hf": corrected(f_ab, df_ab, df_err, sph["epsilon_hf_lecoutre"])}
    out["B:subject(A)"] = {"ss": ss_err, "df": df_err}
    # Between: subject totals over B (observation scale: means times b).
    tot = [x.mean(axis=1) for x in groups]
    ss_a = sum(len(t) * b * (t.mean() - grand) ** 2 for t in tot)
    ss_s = sum(b * np.sum((t - t.mean()) ** 2) for t in tot)
    f_a = (ss_a / (g - 1)) / (ss_s / (n - g))
    out["A"] = {"ss": ss_a, "df": g - 1, "f": f_a, "p": stats.f.sf(f_a, g - 1, n - g)}
    out["subject(A)"] = {"ss": ss_s, "df": n - g}
    # Type 3 SS of B: unweighted mean of the group means.
    gm = np.array([x.mean(axis=0) for x in groups])
    um = gm.mean(axis=0)
    harm = np.sum([1.0 / x.shape[0] for x in groups]) / g ** 2
    out["B_type3_ss"] = np.sum((um - um.mean()) ** 2) / harm
    return out


# 3. The two-way data read as a mixed design: A between (subjects 1-8 under A1, 9-16 under A2), B within.
a1 = np.array([[float(next(r["y"] for r in rows if r["subject"] == s and r["A"] == "A1" and r["B"] == bb)) for bb in ["B1", "B2", "B3"]] for s in subjects])
a2 = np.array([[float(next(r["y"] for r in rows if r["subject"] == s and r["A"] == "A2" and r["B"] == bb)) for bb in ["B1", "B2", "B3"]] for s in subjects])
result["twoway_as_mixed_balanced"] = fmt(mixed([a1, a2]))
# 4. The same with the first two A1 subjects removed (groups of 6 and 8: unequal sizes).
result["twoway_as_mixed_unequal"] = fmt(mixed([a1[2:], a2]))

# 5. Paired t tests of the one-way conditions (scipy.stats.ttest_rel), unadjusted.
pairs = {}
for i in range(3):
    for j in range(i + 1, 3):
        d = y[:, i] - y[:, j]
        t = stats.ttest_rel(y[:, i], y[:, j])
        pairs[conds[i] + "-" + conds[j]] = {"estimate": d.mean(), "se": d.std(ddof=1) / np.sqrt(len(d)), "t": t.statistic, "df": len(d) - 1, "p": t.pvalue}
result["rutherford_oneway_paired"] = fmt(pairs)

print(json.dumps(result, indent=2))
