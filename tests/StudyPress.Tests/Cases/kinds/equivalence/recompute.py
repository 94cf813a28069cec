"""Run with a python3 that has scipy (e.g. /usr/bin/python3 recompute.py > reference.json).

Recomputes the equivalence golden case's values with scipy.stats.t (not a published source).

Data: data/prc471.csv (NIST/SEMATECH e-Handbook 7.4.7.1). The standard error of a difference is
sqrt(MSE (1/n_a + 1/n_b)) on the one-way anova's residual df; the interval is the (1 - 2 alpha)
t interval; p_lower = P(T >= (d - low)/se), p_upper = P(T <= (d - high)/se), p = the larger.
Prints reference.json's checks.
"""
import csv
import json
from fractions import Fraction
from pathlib import Path

from scipy.stats import t as student_t

here = Path(__file__).parent
groups = {}
with open(here / "data" / "prc471.csv", newline="") as f:
    for row in csv.DictReader(f):
        groups.setdefault(row["level"], []).append(Fraction(row["value"]))

alpha = 0.05
mean = {k: sum(v) / len(v) for k, v in groups.items()}
sse = sum(sum((x - mean[k]) ** 2 for x in v) for k, v in groups.items())
df = sum(len(v) for v in groups.values()) - len(groups)
mse = sse / df
source = "recomputed with scipy.stats.t (recompute.py; exact fractions for means and MSE)"


def tost(a, b, low, high):
    d = mean[a] - mean[b]
    se = float(mse * (Fraction(1, len(groups[a])) + Fraction(1, len(groups[b])))) ** 0.5
    q = student_t.ppf(1 - alpha, df)
    out = {"diff": float(d), "se": se, "ci_low": float(d) - q * se, "ci_high": float(d) + q * se}
    if low is not None:
        out["p_lower"] = student_t.sf((float(d) - low) / se, df)
    if high is not None:
        out["p_upper"] = student_t.cdf((float(d) - high) / se, df)
    out["p"] = max(out[k] for k in ("p_lower", "p_upper") if k in out)
    return out


checks = []
for block, (a, b), low, high in [
    ("same", ("4", "1"), -2.0, 2.0),
    ("against", ("2", "1"), -1.5, 1.5),
    ("against", ("3", "1"), -1.5, 1.5),
    ("against", ("4", "1"), -1.5, 1.5),
    ("noninf", ("4", "1"), -1.0, None),
]:
    for stat, value in tost(a, b, low, high).items():
        checks.append({"path": f'{block}.equivalence.level."{a}"."{b}".{stat}', "published": f"{value:.10g}", "status": source})

print(json.dumps({"source": "NIST/SEMATECH e-Handbook 7.4.7.1 data (prc471); no published equivalence test of these data: values " + source, "checks": checks}, indent=2))
