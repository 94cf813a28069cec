#!/usr/bin/env python3
"""Writes data/growth.csv for the seedling-growth example: INVENTED data, not measurements.

Scenario (invented): 24 seedlings, 8 under each of three light regimes, measured once a week for
five weeks. Each seedling has its own starting height and its own growth rate (so measurements
of the same seedling are correlated, more strongly for nearby weeks), and the growth rate depends
on the regime. One seedling ('S17') lost its week-5 measurement (the tag fell off). Python's own
random generator with a fixed seed: the file is the same on every run.
"""
import random

rng = random.Random(20261204)
regimes = [("shade", 0.9), ("ambient", 1.4), ("supplemented", 1.9)]  # mean growth, cm per week
weeks = [1, 2, 3, 4, 5]
rows = []
n = 0
for regime, rate in regimes:
    for _ in range(8):
        n += 1
        seedling = f"S{n:02d}"
        start = rng.gauss(4.0, 0.6)
        own_rate = rate + rng.gauss(0, 0.35)
        for week in weeks:
            height = start + own_rate * (week - 1) + rng.gauss(0, 0.25)
            if seedling == "S17" and week == 5:
                continue
            rows.append((seedling, regime, str(week), f"{height:.1f}"))

with open("data/growth.csv", "w", encoding="utf-8", newline="\n") as f:
    f.write("seedling,light,week,height_cm\n")
    for r in rows:
        f.write(",".join(r) + "\n")
