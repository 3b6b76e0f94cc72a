"""Unusable input raises ValueError naming the argument (the command line's
message with the file or option replaced by the argument's name); wrong
option types raise TypeError naming the option."""
import numpy as np
import pytest

import allocsim
from conftest import counts_case, transport_problem

GAINS, BUDGETS, CAPACITIES = transport_problem(1, 4, 5)
COUNTS, COUNT_GAINS = counts_case(1, 4, 5, units=500)


def with_nan(matrix):
    matrix = matrix.copy()
    matrix[1, 2] = np.nan
    return matrix


@pytest.mark.parametrize("call,argument", [
    (lambda: allocsim.solve_exact(GAINS, BUDGETS[:3], CAPACITIES), "budgets"),
    (lambda: allocsim.solve_exact(GAINS, BUDGETS, CAPACITIES[:4]), "capacities"),
    (lambda: allocsim.solve_entropic(with_nan(GAINS), BUDGETS, CAPACITIES), "gains"),
    (lambda: allocsim.solve_entropic(GAINS, -BUDGETS, CAPACITIES), "budgets"),
    (lambda: allocsim.solve_entropic(GAINS[0], BUDGETS, CAPACITIES), "gains"),
    (lambda: allocsim.solve_entropic(GAINS, BUDGETS, CAPACITIES, np.ones((4, 4))), "access"),
    (lambda: allocsim.solve_entropic(GAINS, BUDGETS, CAPACITIES, np.full((4, 5), 2)), "access"),
    (lambda: allocsim.solve_entropic(GAINS, BUDGETS, 2 * CAPACITIES), "budgets"),
    (lambda: allocsim.solve_entropic(GAINS, BUDGETS, CAPACITIES, epsilon=-1), "epsilon"),
    (lambda: allocsim.solve_entropic(GAINS, BUDGETS, CAPACITIES, tolerence=1e-6), "tolerence"),
    (lambda: allocsim.solve_entropic([["a", "b"]], BUDGETS, CAPACITIES), "gains"),
    (lambda: allocsim.solve_exact(GAINS, None, CAPACITIES), "budgets"),
    (lambda: allocsim.estimate_temperature(with_nan(COUNTS), COUNT_GAINS), "allocation"),
    (lambda: allocsim.estimate_temperature(-COUNTS, COUNT_GAINS), "allocation"),
    (lambda: allocsim.estimate_temperature(COUNTS, COUNT_GAINS[:3]), "allocation"),  # as the CLI
    (lambda: allocsim.estimate_temperature(COUNTS + 0.5, COUNT_GAINS, values="counts"), "values"),
    (lambda: allocsim.estimate_temperature(COUNTS, COUNT_GAINS, confidence=2), "confidence"),
    (lambda: allocsim.analyze(COUNTS, COUNT_GAINS, nulls="shuffle"), "nulls"),
    (lambda: allocsim.analyze(COUNTS, COUNT_GAINS, binarize="half"), "binarize"),
    (lambda: allocsim.nodf(-COUNTS), "matrix"),
    (lambda: allocsim.nodf(COUNTS, order="sideways"), "order"),
    (lambda: allocsim.curveball(COUNTS, samples=1), "samples"),
    (lambda: allocsim.curveball(COUNTS, metrics=["nestedness"]), "metrics"),
    (lambda: allocsim.fixed_margins(COUNTS, seeds=3), "seeds"),
])
def test_unusable_input_raises_value_error_naming_the_argument(call, argument):
    with pytest.raises(ValueError) as error:
        call()
    assert str(error.value).startswith(argument + ":"), str(error.value)


def test_an_unknown_option_suggests_the_nearest():
    with pytest.raises(ValueError, match="did you mean tolerance"):
        allocsim.solve_entropic(GAINS, BUDGETS, CAPACITIES, tolerence=1e-6)


def test_an_option_of_the_wrong_type_is_a_type_error():
    with pytest.raises(TypeError, match="max_iterations"):
        allocsim.solve_entropic(GAINS, BUDGETS, CAPACITIES, max_iterations=2.5)


def test_the_message_is_the_command_lines(cli, tmp_path):
    from conftest import write_csv
    budgets = BUDGETS.copy()
    budgets[2] = -1
    done = cli("solve", "--gains", write_csv(tmp_path / "g.csv", GAINS), "--budgets",
               write_csv(tmp_path / "r.csv", budgets), "--capacities",
               write_csv(tmp_path / "c.csv", CAPACITIES), expect_ok=False)
    with pytest.raises(ValueError) as error:
        allocsim.solve_exact(GAINS, budgets, CAPACITIES)
    what = str(error.value).split(": ", 1)[1]
    assert done.returncode == 2 and what in done.stderr
