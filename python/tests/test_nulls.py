"""Null samplers: the samples keep what each model promises (exact degrees,
exact margins, expected degrees), and the comparisons equal those of
`allocsim analyze --nulls` for the same seed."""
import numpy as np
import pytest

import allocsim
from conftest import counts_case, write_csv


@pytest.fixture(scope="module")
def case():
    return counts_case(31, 8, 10, units=300, eps_share=0.3)


def cli_null(cli, tmp_path, counts, gains, model, samples, seed):
    return cli.json("analyze", "--allocation", write_csv(tmp_path / "p.csv", counts), "--gains",
                    write_csv(tmp_path / "g.csv", gains), "--nulls", model, "--null-samples",
                    samples, "--null-seed", seed)["structure"]


def same_fields(ours, theirs):
    for key, value in theirs.items():
        assert (ours[key] == value) or (value is None and not np.isfinite(ours[key])), key


def test_curveball_keeps_degrees_and_equals_the_command_line(cli, tmp_path, case):
    counts, gains = case
    r = allocsim.curveball(counts, samples=40, seed=3)
    links = (counts > 0).astype(np.uint8)
    assert r.samples.shape == (40,) + counts.shape and r.samples.dtype == np.uint8
    assert np.all(r.samples.sum(axis=2) == links.sum(axis=1))
    assert np.all(r.samples.sum(axis=1) == links.sum(axis=0))
    assert not all(np.array_equal(s, links) for s in r.samples)
    nodf = r.comparisons["nodf"]
    assert np.allclose(nodf.null_values, [allocsim.nodf(s).nodf for s in r.samples], rtol=0)
    same_fields(nodf, cli_null(cli, tmp_path, counts, gains, "curveball", 40, 3)["nodf_null"])


def test_fixed_margins_keeps_the_margins_and_equals_the_command_line(cli, tmp_path, case):
    counts, gains = case
    r = allocsim.fixed_margins(counts, samples=25, seed=8)
    assert np.all(r.samples.sum(axis=2) == counts.sum(axis=1))
    assert np.all(r.samples.sum(axis=1) == counts.sum(axis=0))
    theirs = cli_null(cli, tmp_path, counts, gains, "fixed-margins", 25, 8)
    same_fields(r.comparisons["nodf"], theirs["nodf_null"])
    same_fields(r.comparisons["wnodf"], theirs["wnodf_null"])


def test_bicm_fits_expected_degrees_and_equals_the_command_line(cli, tmp_path, case):
    counts, gains = case
    r = allocsim.bicm(counts, samples=30, seed=2)
    links = (counts > 0)
    if r.fit_status == "converged":
        assert np.allclose(r.probabilities.sum(axis=1), links.sum(axis=1), atol=1e-8)
        assert np.allclose(r.probabilities.sum(axis=0), links.sum(axis=0), atol=1e-8)
    same_fields(r.comparisons["nodf"], cli_null(cli, tmp_path, counts, gains, "bicm", 30, 2)["nodf_null"])


def test_a_python_metric_is_compared_too(case):
    counts, _ = case

    def total_links(matrix):
        return float(matrix.sum())

    r = allocsim.curveball(counts, samples=10, metrics=["nodf", total_links], keep_samples=False)
    assert r.samples is None
    assert r.comparisons["total_links"].status == "zero_spread"  # degrees are fixed
    assert set(r.comparisons) == {"nodf", "total_links"}
