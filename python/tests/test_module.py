"""The package itself: version, signatures and docstrings with defaults,
readable results."""
import inspect

import numpy as np

import allocsim
from conftest import transport_problem


def test_version_is_the_command_lines(cli):
    assert allocsim.__version__ in cli("--version").stdout


def test_signatures_show_the_library_defaults():
    signature = inspect.signature(allocsim.solve_entropic)
    assert list(signature.parameters)[:4] == ["gains", "budgets", "capacities", "access"]
    assert signature.parameters["epsilon"].default == 1.0
    assert signature.parameters["tolerance"].default == 1e-9
    assert signature.parameters["threads"].kind is inspect.Parameter.KEYWORD_ONLY
    doc = allocsim.solve_entropic.__doc__
    assert "epsilon : default 1.0" in doc and "gain units" in doc and "Returns" in doc


def test_results_have_attributes_and_a_readable_repr():
    r = allocsim.solve_exact(*transport_problem(3))
    assert r.status == r["status"] == "optimal"
    text = repr(r)
    assert "status: 'optimal'" in text and "coupling:" in text and "total_gain:" in text
    assert "coupling" in dir(r)
