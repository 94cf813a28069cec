# Reference values for estimated marginal means and their differences from the REML mixed model
# on unbalanced data: the Yates oats split plot (../split-plot/yates-oats.csv) with four sub-plots
# removed (0-based data rows 3, 17, 40, 58), the same fit as oats-missing-plots.py.
# EMM of a level = Intercept + its sum-coded effect (last level alphabetically: minus the others);
# the interaction columns average to zero over the other factor's levels (equal weights).
# SE from Cov(beta) = (X'V^-1 X)^-1 with V = s2_block Z_b Z_b' + s2_wholeplot Z_w Z_w' + s2 I at the
# library's REML variance estimates and its own design matrix (model.exog), computed with numpy: the
# covariance of the GLS estimate that mixed-model marginal means use. (The library's cov_params()
# inverts its observed Hessian including the variance parameters, whose cross terms with the fixed
# effects are not zero away from balance, so it is not this covariance; it is not used.)
# Run with Debian's python3-statsmodels: /usr/bin/python3 oats-missing-plots-emm.py > oats-missing-plots-emm.out.json
import json, sys, itertools
import numpy as np, pandas as pd, scipy, statsmodels
import statsmodels.formula.api as smf

d = pd.read_csv(sys.argv[1] if len(sys.argv) > 1 else "../split-plot/yates-oats.csv")
removed = [3, 17, 40, 58]
d = d.drop(index=removed).reset_index(drop=True).rename(columns={"yield": "y"})
m = smf.mixedlm("y ~ C(variety, Sum) * C(nitrogen, Sum)", d, groups="block",
                re_formula="1", vc_formula={"wholeplot": "0 + C(variety)"})
best = None
for method in (["bfgs"], ["lbfgs"], ["powell", "bfgs"]):
    r = m.fit(reml=True, method=method, maxiter=5000, gtol=1e-12)
    if best is None or r.llf > best.llf:
        best = r
r = best
names = list(r.fe_params.index)
beta = r.fe_params.values
X = m.exog
n = len(d)
zb = pd.get_dummies(d["block"]).values.astype(float)
zw = pd.get_dummies(d["block"] + "/" + d["variety"]).values.astype(float)
V = float(r.cov_re.iloc[0, 0]) * zb @ zb.T + float(r.vcomp[0]) * zw @ zw.T + float(r.scale) * np.eye(n)
cov = np.linalg.inv(X.T @ np.linalg.solve(V, X))

def row(factor, level):
    levels = sorted(d[factor].unique())
    l = np.zeros(len(names))
    l[0] = 1
    for i, lev in enumerate(levels[:-1]):
        col = "C(%s, Sum)[S.%s]" % (factor, lev)
        j = names.index(col)
        l[j] = 1 if level == lev else (-1 if level == levels[-1] else 0)
    return l

out = {
    "library": "statsmodels " + statsmodels.__version__ + " (Debian python3-statsmodels), numpy " + np.__version__ + ", scipy " + scipy.__version__,
    "function": "MixedLM(yield ~ C(variety, Sum) * C(nitrogen, Sum), groups=block, vc_formula={wholeplot: 0 + C(variety)}).fit(reml=True), best llf over bfgs/lbfgs/powell+bfgs; EMM = l'beta (library fe_params), SE = sqrt(l' C l), C = (X'V^-1 X)^-1 by numpy at the library's variance estimates",
    "removed_rows_0_based": removed,
    "emmeans": {},
    "differences": {},
}
for factor in ("variety", "nitrogen"):
    levels = sorted(d[factor].unique())
    rows = {lev: row(factor, lev) for lev in levels}
    for lev in levels:
        l = rows[lev]
        out["emmeans"][factor + " " + lev] = {"mean": repr(float(l @ beta)), "se": repr(float(np.sqrt(l @ cov @ l)))}
    for a, b in itertools.combinations(levels, 2):
        l = rows[a] - rows[b]
        out["differences"][factor + " " + a + " - " + b] = {"diff": repr(float(l @ beta)), "se": repr(float(np.sqrt(l @ cov @ l)))}
print(json.dumps(out, indent=2))
