"""solve_exact and solve_entropic: against `allocsim solve --json` on the
same inputs (identical numbers), exact against scipy's HiGHS (linprog)."""
import numpy as np
import pytest
from scipy.optimize import linprog

import allocsim
from conftest import same_number, transport_problem, write_csv

HIGHS_RELATIVE = 1e-7  # LEMON with 1e12 mass units vs HiGHS's default tolerances (common practice)


def cli_inputs(tmp_path, gains, budgets, capacities):
    return ["--gains", write_csv(tmp_path / "g.csv", gains), "--budgets",
            write_csv(tmp_path / "r.csv", budgets), "--capacities",
            write_csv(tmp_path / "c.csv", capacities)]


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_exact_equals_the_command_line(cli, tmp_path, seed):
    gains, budgets, capacities = transport_problem(seed)
    ours = allocsim.solve_exact(gains, budgets, capacities)
    out = tmp_path / "p.csv"
    theirs = cli.json("solve", *cli_inputs(tmp_path, gains, budgets, capacities),
                      "--method", "exact", "--out", out)
    for key in ("status", "method", "total_gain", "iterations", "marginal_error",
                "support_size", "is_forest", "epsilon"):
        assert same_number(ours[key], theirs[key]) if key != "status" and key != "method" \
            else ours[key] == theirs[key], key
    assert np.array_equal(ours.coupling, np.loadtxt(out, delimiter=",", ndmin=2))


@pytest.mark.parametrize("seed", [4, 5])
def test_exact_matches_highs(seed):
    """Outside reference: scipy.optimize.linprog with method='highs'."""
    gains, budgets, capacities = transport_problem(seed, 12, 15)
    n, m = gains.shape
    rows = np.kron(np.eye(n), np.ones(m))
    columns = np.kron(np.ones(n), np.eye(m))
    lp = linprog(-gains.ravel(), A_eq=np.vstack([rows, columns]),
                 b_eq=np.concatenate([budgets, capacities]), method="highs")
    ours = allocsim.solve_exact(gains, budgets, capacities)
    assert ours.status == "optimal"
    assert ours.total_gain == pytest.approx(-lp.fun, rel=HIGHS_RELATIVE)
    assert ours.support_size <= n + m - 1 and ours.is_forest
    # strong duality of the returned potentials
    dual = budgets @ ours.agent_potential + capacities @ ours.partner_potential
    assert dual == pytest.approx(ours.total_gain, rel=1e-9)


@pytest.mark.parametrize("epsilon", [0.5, 0.05, 0.005])
def test_entropic_equals_the_command_line(cli, tmp_path, epsilon):
    gains, budgets, capacities = transport_problem(7, 10, 8)
    ours = allocsim.solve_entropic(gains, budgets, capacities, epsilon=epsilon)
    out = tmp_path / "p.csv"
    theirs = cli.json("solve", *cli_inputs(tmp_path, gains, budgets, capacities),
                      "--method", "entropic", "--epsilon", repr(epsilon), "--threads", 1,
                      "--out", out)
    for key in ("total_gain", "iterations", "marginal_error", "support_size", "is_forest",
                "epsilon", "entropy", "primal_value", "dual_value", "stages"):
        assert same_number(ours[key], theirs[key]), key
    assert ours.status == theirs["status"] == "converged"
    assert np.array_equal(ours.coupling, np.loadtxt(out, delimiter=",", ndmin=2))


def test_entropic_coupling_has_the_closed_form():
    """pi_ij = exp((gains_ij + f_i + g_j) / epsilon) and the marginals hold (the definition)."""
    gains, budgets, capacities = transport_problem(8)
    r = allocsim.solve_entropic(gains, budgets, capacities, epsilon=0.1, tolerance=1e-12)
    closed = np.exp((gains + r.agent_potential[:, None] + r.partner_potential[None, :]) / 0.1)
    assert np.allclose(r.coupling, closed, rtol=1e-9, atol=0)
    assert np.allclose(r.coupling.sum(axis=1), budgets, rtol=1e-10)


def test_infeasible_access_is_a_status_not_an_exception():
    gains, budgets, capacities = transport_problem(9, 3, 3)
    access = np.ones((3, 3))
    access[0, :] = 0  # agent 1 can use no partner
    for solve in (allocsim.solve_exact, allocsim.solve_entropic):
        r = solve(gains, budgets, capacities, access)
        assert r.status == "infeasible" and "agent 1" in r.message


def test_any_dtype_and_memory_order_give_the_same_answer():
    gains, budgets, capacities = transport_problem(10)
    reference = allocsim.solve_entropic(gains, budgets, capacities, epsilon=0.2)
    fortran = allocsim.solve_entropic(np.asfortranarray(gains), list(budgets),
                                      capacities.astype(np.longdouble), epsilon=0.2)
    assert np.array_equal(reference.coupling, fortran.coupling)
    scaled = (gains * 4).astype(np.int64)
    assert allocsim.solve_exact(scaled, budgets, capacities).status == "optimal"


def test_results_are_returned_without_a_copy():
    gains, budgets, capacities = transport_problem(11)
    r = allocsim.solve_entropic(gains, budgets, capacities)
    assert not r.coupling.flags.owndata and r.coupling.base is not None
    assert r.coupling.flags.c_contiguous
