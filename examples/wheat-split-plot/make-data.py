#!/usr/bin/env python3
"""Writes data/plots.csv: INVENTED data for the wheat split-plot example (fixed seed).

Four blocks; in each, three whole plots get an irrigation schedule at random, and each whole plot
is split into four sub-plots sown with the four varieties at random. Yields (t/ha) are drawn from a
made-up model: block, whole-plot and sub-plot errors around invented effects. Not real data.
"""
import random

rng = random.Random(20261204)
irrigation = {"rainfed": -0.9, "deficit": 0.0, "full": 0.6}
variety = {"Aurora": 0.0, "Brisa": 0.35, "Cobalt": -0.25, "Dune": 0.5}
gain_under_water = {"Aurora": 0.0, "Brisa": 0.1, "Cobalt": 0.3, "Dune": -0.1}
rows = ["block,whole_plot,irrigation,variety,yield_t_ha"]
for b in range(1, 5):
    block_effect = rng.gauss(0, 0.35)
    schedules = list(irrigation)
    rng.shuffle(schedules)
    for p, schedule in enumerate(schedules, start=1):
        whole_plot_error = rng.gauss(0, 0.25)
        varieties = list(variety)
        rng.shuffle(varieties)
        for v in varieties:
            water = 1.0 if schedule == "full" else 0.0
            y = 6.2 + block_effect + irrigation[schedule] + variety[v] + water * gain_under_water[v] + whole_plot_error + rng.gauss(0, 0.2)
            rows.append(f"B{b},B{b}-P{p},{schedule},{v},{y:.2f}")
with open("data/plots.csv", "w", encoding="utf-8", newline="\n") as f:
    f.write("\n".join(rows) + "\n")
