#!/usr/bin/python3
"""Writes the invented field matrices of examples/field/ (seeded; run from
anywhere: /usr/bin/python3 examples/field/make_examples.py). The numbers are
made up for the README's walk-throughs; no real survey or trade data.

meadow_visits.csv     plant x pollinator visit counts over a season, nested
                      (generalist visitors reach most plants, specialists the
                      most visited ones) with sampling noise; one plant was
                      never visited (an all-zero row).
meadow_match.csv      gains of each pollinator on each plant from how well
                      tongue length fits corolla depth, -|depth - tongue| in
                      mm, rows and columns in another order than the visits
                      (they are matched by label).
meadow_plant_traits.csv, meadow_pollinator_traits.csv
                      the traits behind meadow_match.csv: corolla depth of
                      each plant and tongue length of each pollinator, mm,
                      rounded to 0.1 (for --row-traits/--column-traits).
trade_exports.csv     country x product export values in whole US dollars,
                      nested (diversified countries export the complex
                      products); one product nobody exported (all-zero column).
"""
import os

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))

PLANTS = ["red clover", "bird's-foot trefoil", "meadow sage", "field scabious", "oxeye daisy",
          "wild carrot", "common knapweed", "viper's bugloss", "yellow rattle", "selfheal",
          "meadow buttercup", "lady's bedstraw", "tufted vetch", "harebell"]
POLLINATORS = ["honeybee", "buff-tailed bumblebee", "common carder bee", "red-tailed bumblebee",
               "garden bumblebee", "marmalade hoverfly", "drone fly", "small skipper",
               "meadow brown", "common blue", "leafcutter bee", "mining bee", "soldier beetle",
               "thick-legged flower beetle", "long-horned bee", "wool carder bee"]
COUNTRIES = ["Aldoria", "Brevania", "Corvell", "Dunmark", "Estrela", "Falkreach", "Gorvia",
             "Hallin", "Istrenne", "Jorvik Isles", "Kestova", "Lunmoor"]
PRODUCTS = ["raw cotton", "coffee beans", "crude oil", "timber", "wheat", "copper ore",
            "textiles", "footwear", "furniture", "steel", "plastics", "machine tools",
            "vehicles", "pharmaceuticals", "semiconductors", "aircraft parts"]


def write(name, values, rows, cols, fmt):
    def quote(text):
        return '"' + text + '"' if "," in text else text
    with open(os.path.join(HERE, name), "w") as f:
        f.write("," + ",".join(quote(c) for c in cols) + "\n")
        for label, row in zip(rows, values):
            f.write(quote(label) + "," + ",".join(fmt(v) for v in row) + "\n")


def meadow(rng):
    n, m = len(PLANTS), len(POLLINATORS)
    attractiveness = np.sort(rng.gamma(2.0, 1.0, n))[::-1]
    generality = np.sort(rng.gamma(1.2, 1.0, m))[::-1]
    depth = rng.uniform(2, 14, n)   # corolla depth, mm
    tongue = rng.uniform(2, 14, m)  # tongue length, mm
    match = -np.abs(np.subtract.outer(depth, tongue))
    rate = np.outer(attractiveness, generality) * np.exp(match / 1.5) * 6.0
    visits = rng.poisson(rate)
    visits[PLANTS.index("harebell"), :] = 0  # never seen visited this season
    r, c = rng.permutation(n), rng.permutation(m)
    write("meadow_visits.csv", visits, PLANTS, POLLINATORS, lambda v: str(int(v)))
    write("meadow_match.csv", np.round(match[r][:, c], 1), [PLANTS[k] for k in r],
          [POLLINATORS[k] for k in c], lambda v: f"{v:g}")
    write("meadow_plant_traits.csv", np.round(depth, 1)[:, None], PLANTS, ["corolla depth mm"],
          lambda v: f"{v:g}")
    write("meadow_pollinator_traits.csv", np.round(tongue, 1)[:, None], POLLINATORS,
          ["tongue length mm"], lambda v: f"{v:g}")


def trade(rng):
    n, m = len(COUNTRIES), len(PRODUCTS)
    fitness = np.sort(rng.lognormal(0, 0.8, n))[::-1]
    complexity = np.linspace(0.2, 2.2, m)
    capable = np.add.outer(np.log(fitness), -np.log(complexity)) > -0.2
    capable ^= rng.random((n, m)) < 0.08  # a few exceptions either way
    size = rng.lognormal(21, 1.0, n)
    value = np.where(capable, rng.lognormal(0, 1.2, (n, m)), 0.0) * size[:, None] / m
    value[:, PRODUCTS.index("aircraft parts")] = 0
    write("trade_exports.csv", np.round(value), COUNTRIES, PRODUCTS, lambda v: str(int(v)))


def main():
    rng = np.random.default_rng(20261202)
    meadow(rng)
    trade(rng)


if __name__ == "__main__":
    main()
