#!/usr/bin/python3
"""An ecologist's visit matrix: how nested is it, against null models that
keep its margins?

meadow_visits.csv is an invented season of pollinator visits to meadow
plants (counts; rows are pollinators, columns plants), for demonstration.
Run: PYTHONPATH=build/python python3 examples/python/ecologist_nulls.py
"""
import os

import pandas as pd

import allocsim

here = os.path.dirname(os.path.abspath(__file__))
visits = pd.read_csv(os.path.join(here, "meadow_visits.csv"), index_col=0)
print(f"{visits.shape[0]} pollinators x {visits.shape[1]} plants, {int(visits.values.sum())} visits")

print(f"connectance     {allocsim.connectance(visits):.3f}")
print(f"NODF            {allocsim.nodf(visits).nodf:.1f}")
print(f"WNODF           {allocsim.wnodf(visits).wnodf:.1f}")
print(f"spectral radius {allocsim.spectral_radius(visits):.3f}")

# The same metrics against three null models, 200 samples each (same seed, same numbers).
rows = []
for sampler in (allocsim.curveball, allocsim.bicm, allocsim.fixed_margins):
    nulls = sampler(visits, samples=200, seed=1, keep_samples=False)
    for metric, c in nulls.comparisons.items():
        rows.append({"null model": nulls.model, "metric": metric, "observed": c.observed,
                     "null mean": c.null_mean, "null sd": c.null_sd, "z": c.z_score,
                     "p (upper)": c.p_upper})
table = pd.DataFrame(rows)
print(table.to_string(index=False, float_format=lambda v: f"{v:.3g}"))

# Which plants and pollinators lead the ordering (Fitness-Complexity on the links)?
order = allocsim.fitness_complexity(visits)
print("most generalist pollinators:", ", ".join(visits.index[order.row_order[:3]]))
print("plants visited only by the most generalist pollinators:",
      ", ".join(visits.columns[order.column_order[:3]]))
assert table["null sd"].gt(0).all()
