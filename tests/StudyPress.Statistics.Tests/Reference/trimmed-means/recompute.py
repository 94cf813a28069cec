#!/usr/bin/python3
"""Reference values for the trimmed-means comparison (Yuen 1974; its k-group Welch form).

Run with Debian's /usr/bin/python3 (SciPy 1.10.1, NumPy 1.24.2): writes recompute.out.json.
1. SciPy's Yuen test, scipy.stats.ttest_ind(a, b, equal_var=False, trim=γ), on two batches of the
   NIST/SEMATECH e-Handbook GEAR data (../nist-ehandbook/gear.csv): t, t², p (a library value).
2. Exact recomputation with Python fractions of the k-group statistic on the e-Handbook resistor
   data (../nist-ehandbook/prc433-resistor-3levels.csv, 3 levels x 5), trim 0.2: trimmed means,
   winsorized variances, F and df2 as exact fractions (printed to 17 significant digits); p from
   scipy.stats.f.sf (a library value).
"""
import csv, json, os
from fractions import Fraction as Fr
import numpy, scipy
from scipy import stats

here = os.path.dirname(os.path.abspath(__file__))
ref = os.path.join(here, "..", "nist-ehandbook")


def groups(path, factor, response):
    g = {}
    with open(path, newline="") as f:
        for row in csv.DictReader(f):
            g.setdefault(row[factor], []).append(row[response])
    return g


def exact(values, trim):
    x = sorted(Fr(v) for v in values)
    n = len(x)
    g = int(Fr(trim) * n)  # floor of an exact product
    h = n - 2 * g
    tm = sum(x[g:n - g]) / h
    w = [x[g]] * g + x[g:n - g] + [x[n - g - 1]] * g
    wm = sum(w) / n
    sw2 = sum((v - wm) ** 2 for v in w) / (n - 1)
    return n, g, h, tm, sw2


def kgroup(parts):
    k = len(parts)
    d = [(n - 1) * sw2 / (h * (h - 1)) for n, g, h, tm, sw2 in parts]
    w = [1 / dj for dj in d]
    u = sum(w)
    xt = sum(wj * p[3] for wj, p in zip(w, parts)) / u
    a = sum(wj * (p[3] - xt) ** 2 for wj, p in zip(w, parts)) / (k - 1)
    l = sum((1 - wj / u) ** 2 / (p[2] - 1) for wj, p in zip(w, parts))
    b = Fr(2 * (k - 2)) * l / (k * k - 1)
    return a / (1 + b), Fr(k * k - 1) / (3 * l)


def s(x):
    return format(float(x), ".17g")


out = {"library": f"SciPy {scipy.__version__} (NumPy {numpy.__version__}), Debian python3-scipy", "yuen_gear": [], "resistor_exact": {}}
gear = groups(os.path.join(ref, "gear.csv"), "batch", "diameter")
for a, b, trim in [("1", "10", "0.2"), ("1", "2", "0.2"), ("4", "7", "0.1")]:
    r = stats.ttest_ind([float(v) for v in gear[a]], [float(v) for v in gear[b]], equal_var=False, trim=float(trim))
    out["yuen_gear"].append({"a": a, "b": b, "trim": trim, "t": repr(float(r.statistic)), "t2": repr(float(r.statistic) ** 2), "p": repr(float(r.pvalue))})

res = groups(os.path.join(ref, "prc433-resistor-3levels.csv"), "level", "value")
parts = [exact(res[k], "0.2") for k in sorted(res)]
f, df2 = kgroup(parts)
out["resistor_exact"] = {
    "trim": "0.2",
    "levels": {k: {"n": p[0], "g": p[1], "h": p[2], "trimmed_mean": str(p[3]), "winsorized_variance": str(p[4])} for k, p in zip(sorted(res), parts)},
    "f": str(f), "f_decimal": s(f), "df2": str(df2), "df2_decimal": s(df2),
    "p_scipy_f_sf": repr(float(stats.f.sf(float(f), 2, float(df2)))),
}
with open(os.path.join(here, "recompute.out.json"), "w") as fh:
    json.dump(out, fh, indent=2)
    fh.write("\n")
