#!/usr/bin/env python3
"""Writes the benchmark studies and their data into a folder (default /tmp/studypress-bench/studies).

Usage: gen-studies.py [DIR] [--sizes 1000000,10000000]

Everything is generated from a fixed seed, so the files are the same on every run. Large data
files are written once and reused while their size matches (delete DIR to regenerate).
Nothing here is committed: the data are made on the machine that runs the benchmarks.
"""
import os
import random
import sys

SMALL = """---
title: Benchmark - small one-way study
data:
  d: small.csv
response: y
factors:
  group:
    levels: [g1, g2, g3, g4]
order: run
---

# Summary

```summary groups
caption: Response by group
```

# Analysis

```anova main
factors: [group]
```

```assumptions checks
of: main
```

```posthoc pairs
of: main
method: tukey
```

Groups differ: F = [=main.group.f], [=main.group.p].
"""

ONEWAY = """---
title: Benchmark - one-way study, {rows} rows
data:
  d: {csv}
response: y
factors:
  group:
    levels: [g1, g2, g3, g4, g5]
order: run
---

```summary groups
```

```anova main
factors: [group]
```

```assumptions checks
of: main
```

F = [=main.group.f].
"""

TWOWAY = """---
title: Benchmark - two-way study, {rows} rows
data:
  d: {csv}
response: y
factors:
  a:
    levels: [a1, a2, a3]
  b:
    levels: [b1, b2, b3, b4]
---

```anova main
factors: [a, b]
interaction: true
```

```assumptions checks
of: main
```

F = [=main.a.f].
"""


def write_small(path):
    rng = random.Random(1)
    shift = {"g1": 0.0, "g2": 0.8, "g3": 1.5, "g4": 0.3}
    with open(path, "w", encoding="utf-8", newline="\n") as f:
        f.write("id,run,group,y\n")
        order = list(range(1, 41))
        rng.shuffle(order)
        for i in range(40):
            g = "g%d" % (i % 4 + 1)
            f.write("R%02d,%d,%s,%.2f\n" % (i + 1, order[i], g, 20 + shift[g] + rng.gauss(0, 1)))


def write_oneway(path, rows):
    rng = random.Random(2)
    with open(path, "w", encoding="utf-8", newline="\n") as f:
        f.write("run,group,y\n")
        chunk = []
        for i in range(rows):
            g = i % 5
            chunk.append("%d,g%d,%.3f\n" % (i + 1, g + 1, 50 + 0.1 * g + rng.gauss(0, 2)))
            if len(chunk) == 100000:
                f.write("".join(chunk))
                chunk = []
        f.write("".join(chunk))


def write_twoway(path, rows):
    rng = random.Random(3)
    with open(path, "w", encoding="utf-8", newline="\n") as f:
        f.write("a,b,y\n")
        chunk = []
        for i in range(rows):
            a = i % 3
            b = (i // 3) % 4
            chunk.append("a%d,b%d,%.3f\n" % (a + 1, b + 1, 10 + 0.2 * a + 0.1 * b + rng.gauss(0, 1)))
            if len(chunk) == 100000:
                f.write("".join(chunk))
                chunk = []
        f.write("".join(chunk))


def lines_in(path):
    if not os.path.exists(path):
        return -1
    with open(path, "rb") as f:
        return sum(chunk.count(b"\n") for chunk in iter(lambda: f.read(1 << 20), b""))


def main():
    args = sys.argv[1:]
    sizes = [1000000, 10000000]
    if "--sizes" in args:
        i = args.index("--sizes")
        sizes = [int(s) for s in args[i + 1].split(",") if s]
        del args[i:i + 2]
    out = args[0] if args else "/tmp/studypress-bench/studies"
    os.makedirs(out, exist_ok=True)
    write_small(os.path.join(out, "small.csv"))
    with open(os.path.join(out, "small.md"), "w", encoding="utf-8") as f:
        f.write(SMALL)
    for rows in sizes:
        for kind, template, writer in (("oneway", ONEWAY, write_oneway), ("twoway", TWOWAY, write_twoway)):
            csv = "%s-%d.csv" % (kind, rows)
            path = os.path.join(out, csv)
            if lines_in(path) != rows + 1:
                writer(path, rows)
            with open(os.path.join(out, "%s-%d.md" % (kind, rows)), "w", encoding="utf-8") as f:
                f.write(template.format(rows=rows, csv=csv))


if __name__ == "__main__":
    main()
