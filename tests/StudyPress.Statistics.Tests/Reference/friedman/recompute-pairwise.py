"""Recomputation, for this project's tests, of Friedman quantities that the published sources do
not print: the tie-corrected Iman-Davenport F, Kendall's W, Conover's pairwise t and p (with Holm),
and Nemenyi's pairwise p-values and critical difference.

Exact rational arithmetic (fractions) for every rank quantity; 40-digit mpmath for the
probabilities (regularized incomplete beta and gamma; the range of k standard normals by
P(W > w) = k * integral phi(z) Phi(z)^(k-1) [1 - (1 - Phi(z - w)/Phi(z))^(k-1)] dz).
Not a published source: tests that use these values call them exact recomputation.

Run: python3 recompute-pairwise.py zar-example-12-6.csv demsar-2006-auc.csv bioestadistica-12x4.csv
(output kept in recompute-pairwise.out.txt).
"""
import csv
import sys
from fractions import Fraction as Fr

import mpmath as mp

mp.mp.dps = 40


def load(path):
    rows = list(csv.DictReader(open(path)))
    bk, tk, yk = list(rows[0].keys())
    blocks, treats = [], []
    for r in rows:
        if r[bk] not in blocks:
            blocks.append(r[bk])
        if r[tk] not in treats:
            treats.append(r[tk])
    y = {(r[bk], r[tk]): Fr(r[yk]) for r in rows}
    return treats, [[y[(b, t)] for t in treats] for b in blocks]


def midranks(row):
    s = sorted(row)
    return [Fr(sum(i + 1 for i, v in enumerate(s) if v == x), s.count(x)) for x in row]


def mpf(q):
    return mp.mpf(q.numerator) / q.denominator


def t_two_sided(t2, df):
    return mp.betainc(mp.mpf(df) / 2, mp.mpf(1) / 2, 0, mp.mpf(df) / (df + mpf(t2)), regularized=True)


def f_upper(f, d1, d2):
    return mp.betainc(mp.mpf(d2) / 2, mp.mpf(d1) / 2, 0, mp.mpf(d2) / (d2 + d1 * mpf(f)), regularized=True)


def chi2_upper(x, df):
    return mp.gammainc(mp.mpf(df) / 2, mpf(x) / 2, mp.inf, regularized=True)


def range_upper(w, k):
    f = lambda z: mp.npdf(z) * mp.ncdf(z) ** (k - 1) * (1 - (1 - mp.ncdf(z - w) / mp.ncdf(z)) ** (k - 1))
    return k * mp.quad(f, [-mp.inf, -3, 0, w / 2, w, mp.inf])


def s(x):
    return mp.nstr(x, 20)


def run(path, alpha=Fr(5, 100)):
    treats, x = load(path)
    n, k = len(x), len(treats)
    r = [midranks(row) for row in x]
    R = [sum(r[i][j] for i in range(n)) for j in range(k)]
    S = sum((Rj - Fr(n * (k + 1), 2)) ** 2 for Rj in R)
    T = 0
    for row in x:
        for v in set(row):
            t = row.count(v)
            T += t ** 3 - t
    A2 = sum(v * v for row in r for v in row)
    B2 = sum(v * v for v in R) / n
    sst = B2 - Fr(n * k * (k + 1) ** 2, 4)
    sse = A2 - B2
    df1, df2 = k - 1, (k - 1) * (n - 1)
    chi_u = Fr(12, n * k * (k + 1)) * S
    C = 1 - Fr(T, n * (k ** 3 - k))
    chi_c = chi_u / C
    W = 12 * S / (n * n * (k ** 3 - k) - n * T)
    Fc = (n - 1) * sst / sse
    Fu = (n - 1) * chi_u / (n * (k - 1) - chi_u)
    assert S == n * sst and W == chi_c / (n * (k - 1)) and Fc == (n - 1) * chi_c / (n * (k - 1) - chi_c)
    print(path, "n", n, "k", k)
    print(" rank sums", [str(v) for v in R], "mean ranks", [str(v / n) for v in R])
    print(" chi2 uncorrected", chi_u, "p", s(chi2_upper(chi_u, df1)))
    print(" tie correction C", C, "tie sum", T)
    print(" chi2 tie-corrected", chi_c, "p", s(chi2_upper(chi_c, df1)))
    print(" Kendall W", W)
    print(" Iman-Davenport F tie-corrected", Fc, "p", s(f_upper(Fc, df1, df2)))
    print(" Iman-Davenport F uncorrected", Fu, "p", s(f_upper(Fu, df1, df2)))
    qa = mp.findroot(lambda w: range_upper(w, k) - mpf(alpha), mp.mpf(3))
    print(" Nemenyi q(alpha=%s, k, inf)" % alpha, s(qa), "CD", s(qa / mp.sqrt(2) * mp.sqrt(mp.mpf(k * (k + 1)) / (6 * n))))
    mse = sse / df2
    print(" Conover MSE", mse, "Se^2 = 2 MSE / n =", 2 * mse / n, "df", df2)
    raw, names = [], []
    for a in range(k):
        for b in range(a + 1, k):
            d = (R[a] - R[b]) / n
            t2 = d * d / (2 * mse / n)
            p = t_two_sided(t2, df2)
            raw.append(p)
            names.append(f"{treats[a]}|{treats[b]}")
            q2 = d * d / Fr(k * (k + 1), 12 * n)
            q = mp.sqrt(mpf(q2))
            print(f"  {treats[a]}|{treats[b]} d {d} | Conover t^2 {t2} p {s(p)} | Nemenyi q^2 {q2} p_adj {s(range_upper(q, k))} z-p {s(mp.erfc(q / 2))}")
    m = len(raw)
    order = sorted(range(m), key=lambda i: raw[i])
    running, adj = mp.mpf(0), [None] * m
    for j, i in enumerate(order):
        running = max(running, min(1, (m - j) * raw[i]))
        adj[i] = running
    for nm, v in zip(names, adj):
        print(f"  Conover Holm {nm} {s(v)}")


for p in sys.argv[1:]:
    run(p)
