# Reference values for the REML mixed model on unbalanced data: the Yates oats split plot
# (../split-plot/yates-oats.csv) with four sub-plots removed (0-based data rows 3, 17, 40, 58).
# Run with Debian's python3-statsmodels: /usr/bin/python3 oats-missing-plots.py > oats-missing-plots.out.json
import json, sys
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
out = {
    "library": "statsmodels " + statsmodels.__version__ + " (Debian python3-statsmodels), numpy " + np.__version__ + ", scipy " + scipy.__version__,
    "function": "MixedLM(yield ~ C(variety, Sum) * C(nitrogen, Sum), groups=block, vc_formula={wholeplot: 0 + C(variety)}).fit(reml=True), best llf over bfgs/lbfgs/powell+bfgs",
    "removed_rows_0_based": removed,
    "n": int(len(d)),
    "block_variance": repr(float(r.cov_re.iloc[0, 0])),
    "wholeplot_variance": repr(float(r.vcomp[0])),
    "residual_variance": repr(float(r.scale)),
    "reml_loglik": repr(float(r.llf)),
    "converged": bool(r.converged),
    "fixed_effects": {k: repr(float(v)) for k, v in r.fe_params.items()},
}
print(json.dumps(out, indent=2))
