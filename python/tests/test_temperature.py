"""estimate_temperature against `allocsim analyze --json` (identical numbers)
and against a statsmodels Poisson GLM with row and column fixed effects
(the log-linear model of a two-way table; Agresti, Categorical Data
Analysis ch. 9): epsilon = 1 / the gains coefficient, se by the delta method."""
import numpy as np
import pytest
import statsmodels.api as sm

import allocsim
from conftest import counts_case, same_number, write_csv

EPS_TOLERANCE = 1e-6
SE_TOLERANCE = 1e-4


def glm_beta(counts, gains):
    n, m = counts.shape
    rows = np.repeat(np.arange(n), m)
    columns = np.tile(np.arange(m), n)
    design = np.column_stack([gains.ravel(), np.eye(n)[rows], np.eye(m)[columns][:, 1:]])
    fit = sm.GLM(counts.ravel(), design, family=sm.families.Poisson()).fit(tol=1e-13, maxiter=200)
    return fit.params[0], fit.bse[0]


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_temperature_matches_a_poisson_glm(seed):
    counts, gains = counts_case(seed)
    t = allocsim.estimate_temperature(counts, gains)
    beta, se_beta = glm_beta(counts, gains)
    assert t.status == "estimated"
    assert t.epsilon == pytest.approx(1 / beta, rel=EPS_TOLERANCE)
    assert t.stderr == pytest.approx(se_beta / beta**2, rel=SE_TOLERANCE)
    assert t.ci_low < t.epsilon < t.ci_high


@pytest.mark.parametrize("seed", [4, 5])
def test_temperature_equals_the_command_line(cli, tmp_path, seed):
    counts, gains = counts_case(seed)
    counts[2, :] = 0  # an all-zero row is left out by both, with a note
    ours = allocsim.estimate_temperature(counts, gains)
    theirs = cli.json("analyze", "--allocation", write_csv(tmp_path / "p.csv", counts),
                      "--gains", write_csv(tmp_path / "g.csv", gains))
    for key, value in theirs["temperature"].items():
        if key == "status" or key == "message":
            assert ours[key] == value, key
        else:
            assert same_number(ours[key], value), key
    assert ours.note and ours.dropped_rows.tolist() == [2]
    assert ours.coupling.shape == counts.shape and np.all(ours.coupling[2] == 0)


def test_shares_have_no_standard_error_and_units_restore_it():
    counts, gains = counts_case(6)
    as_counts = allocsim.estimate_temperature(counts, gains)
    shares = allocsim.estimate_temperature(counts, gains, values="shares")
    assert shares.epsilon == pytest.approx(as_counts.epsilon, rel=1e-9)
    assert np.isnan(shares.stderr) and shares.units is None
    with_units = allocsim.estimate_temperature(counts / counts.sum(), gains, units=counts.sum())
    assert with_units.stderr == pytest.approx(as_counts.stderr, rel=1e-9)


def test_an_exactly_optimal_allocation_is_a_boundary_status():
    counts, gains = counts_case(7)
    exact = allocsim.solve_exact(gains, counts.sum(axis=1), counts.sum(axis=0))
    t = allocsim.estimate_temperature(exact.coupling, gains)
    assert t.status == "at_optimum" and t.epsilon == 0
