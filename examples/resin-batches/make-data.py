#!/usr/bin/env python3
"""Writes data/viscosity.csv: INVENTED data for the resin-batch example (fixed seed).

Three suppliers each deliver four batches (batch codes are unique across the study); three
operators, a sample of the lab's staff, each measure every batch twice. Viscosities (Pa·s) are
drawn from a made-up model with supplier effects, batch-to-batch and operator variation and
measurement error. Not real data.
"""
import random

rng = random.Random(4122026)
suppliers = {"Halden": 0.0, "Marsh": 0.6, "Orvik": -0.3}
operators = {op: rng.gauss(0, 0.15) for op in ("op-1", "op-2", "op-3")}
rows = ["supplier,batch,operator,viscosity_pa_s"]
for s, (supplier, effect) in enumerate(suppliers.items()):
    for b in range(1, 5):
        batch = f"{supplier[0]}{b:02d}"
        batch_effect = rng.gauss(0, 0.3)
        for op, op_effect in operators.items():
            interaction = rng.gauss(0, 0.05)
            for _ in range(2):
                y = 12.0 + effect + batch_effect + op_effect + interaction + rng.gauss(0, 0.08)
                rows.append(f"{supplier},{batch},{op},{y:.3f}")
with open("data/viscosity.csv", "w", encoding="utf-8", newline="\n") as f:
    f.write("\n".join(rows) + "\n")
