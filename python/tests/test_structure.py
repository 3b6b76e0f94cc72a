"""Structure metrics: NODF against an implementation written here from the
published definition (Almeida-Neto et al. 2008, Oikos 117:1227-1239),
connectance and spectral radius against numpy, NODF, WNODF, connectance and
spectral radius against `allocsim analyze --json`, Fitness-Complexity
against its published iteration (Tacchella et al. 2012) in numpy."""
import itertools

import numpy as np
import pytest

import allocsim
from conftest import counts_case, same_number, write_csv


def nodf_from_the_paper(links):
    """Almeida-Neto et al. 2008: rows and columns sorted by decreasing degree;
    a pair (upper, lower) with degree(upper) > degree(lower) > 0 scores
    100 * (shared links) / degree(lower), otherwise 0 (decreasing fill);
    NODF = mean over all row pairs and column pairs."""
    def paired(matrix):
        degrees = matrix.sum(axis=1)
        order = np.argsort(-degrees, kind="stable")
        scores = []
        for a, b in itertools.combinations(order, 2):
            if degrees[a] > degrees[b] > 0:
                scores.append(100.0 * np.sum(matrix[a] & matrix[b]) / degrees[b])
            else:
                scores.append(0.0)
        return scores
    rows, columns = paired(links), paired(links.T)
    mean = lambda s: float(np.mean(s)) if s else 0.0
    return mean(rows), mean(columns), mean(rows + columns)


@pytest.mark.parametrize("seed", range(4))
def test_nodf_follows_the_published_definition(seed):
    rng = np.random.default_rng(seed)
    links = (rng.uniform(size=(9 + seed, 12)) < rng.uniform(0.2, 0.7)).astype(np.uint8)
    r = allocsim.nodf(links)
    rows, columns, total = nodf_from_the_paper(links.astype(bool))
    assert r.nodf_rows == pytest.approx(rows, abs=1e-10)
    assert r.nodf_columns == pytest.approx(columns, abs=1e-10)
    assert r.nodf == pytest.approx(total, abs=1e-10)


def test_a_perfectly_nested_staircase_scores_100():
    """Common practice: a staircase with strictly decreasing degrees is perfectly nested."""
    links = np.tril(np.ones((6, 6)))[::-1]
    assert allocsim.nodf(links).nodf == pytest.approx(100)


def test_connectance_and_spectral_radius_match_numpy():
    rng = np.random.default_rng(7)
    weights = rng.uniform(size=(8, 11)) * (rng.uniform(size=(8, 11)) < 0.5)
    links = (weights > 0).astype(float)
    assert allocsim.connectance(weights) == links.mean()
    assert allocsim.spectral_radius(weights) == pytest.approx(
        np.linalg.svd(links, compute_uv=False)[0], rel=1e-10)
    assert allocsim.spectral_radius(weights, weighted=True) == pytest.approx(
        np.linalg.svd(weights, compute_uv=False)[0], rel=1e-10)
    assert np.array_equal(allocsim.binarize(weights), links.astype(np.uint8))


@pytest.mark.parametrize("rule,threshold", [("positive", None), ("row-share", 0.08),
                                            ("revealed-advantage", 1.0)])
def test_structure_equals_the_command_line(cli, tmp_path, rule, threshold):
    counts, gains = counts_case(21, 9, 11, units=600, eps_share=0.25)
    extra = ["--threshold", threshold] if threshold is not None else []
    theirs = cli.json("analyze", "--allocation", write_csv(tmp_path / "p.csv", counts),
                      "--gains", write_csv(tmp_path / "g.csv", gains), "--binarize", rule,
                      *extra)["structure"]
    options = dict(binarize=rule, threshold=threshold)
    n = allocsim.nodf(counts, **options)
    w = allocsim.wnodf(counts, **options)
    assert (n.nodf, n.nodf_rows, n.nodf_columns) == (
        theirs["nodf"], theirs["nodf_rows"], theirs["nodf_columns"])
    assert w.wnodf == theirs["wnodf"] and n.binarize == theirs["binarize"]
    assert same_number(allocsim.connectance(counts, **options), theirs["connectance"])
    assert same_number(allocsim.spectral_radius(counts, **options), theirs["spectral_radius"])


def test_fitness_complexity_follows_the_published_iteration():
    """Tacchella et al. 2012: F~ = M Q, Q~ = 1 / (M^T (1/F)), both normalised to mean 1."""
    rng = np.random.default_rng(3)
    links = (rng.uniform(size=(10, 14)) < 0.55).astype(float)
    links[:, 0] = 1  # a link everywhere keeps every score positive
    r = allocsim.fitness_complexity(links, tolerance=1e-13)
    fitness, complexity = np.ones(10), np.ones(14)
    for _ in range(r.iterations):
        fitness, complexity = links @ complexity, 1 / (links.T @ (1 / fitness))
        fitness, complexity = fitness / fitness.mean(), complexity / complexity.mean()
    assert r.status == "converged"
    assert np.allclose(r.fitness, fitness, rtol=1e-9)
    assert np.allclose(r.complexity, complexity, rtol=1e-9)
    assert list(r.row_order) == list(np.argsort(-r.fitness, kind="stable"))


def test_eci_and_gradient_order_are_orderings():
    rng = np.random.default_rng(4)
    weights = rng.uniform(size=(7, 9)) * (rng.uniform(size=(7, 9)) < 0.7)
    weights[:, 0] += 1
    e = allocsim.eci(weights)
    assert sorted(e.row_order) == list(range(7)) and sorted(e.column_order) == list(range(9))
    assert np.mean(e.row_index) == pytest.approx(0, abs=1e-10)
    g = allocsim.gradient_order(weights)
    assert sorted(g.row_order) == list(range(7)) and len(g.column_scores) == 9
