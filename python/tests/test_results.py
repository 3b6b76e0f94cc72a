"""simulate and read_results against the command line's results files read
with h5py: the same experiment gives bit-identical arrays."""
import os

import h5py
import numpy as np
import pandas as pd
import pytest

import allocsim

DATA = os.environ.get("ALLOCSIM_TEST_DATA", os.path.join(os.path.dirname(__file__), "..", "..",
                                                         "tests", "data"))
EXPERIMENT = os.path.join(DATA, "sim_small.ini")


@pytest.fixture(scope="module")
def cli_run(cli, tmp_path_factory):
    path = tmp_path_factory.mktemp("sim") / "cli.h5"
    cli("simulate", "--config", EXPERIMENT, "--out", path, "--quiet")
    return path


def assert_same_run(ours, path):
    with h5py.File(path, "r") as f:
        run = f["runs"][list(f["runs"])[0]]
        for name in ("gains", "budgets", "capacities"):
            assert np.array_equal(ours[name], run["scenario"][name][()]), name
        if "access" in run["scenario"]:
            assert np.array_equal(ours.access, run["scenario"]["access"][()])
        assert np.array_equal(ours.snapshots, run["allocation"]["snapshots"][()])
        assert np.array_equal(ours.total, run["allocation"]["total"][()])
        assert np.array_equal(ours.round_end, run["allocation"]["round_end"][()])
        assert np.array_equal(ours.prices, run["prices"][()])


def test_simulate_from_ini_text_is_bit_identical_to_the_command_line(cli_run):
    with open(EXPERIMENT) as f:
        ours = allocsim.simulate(f.read())
    assert_same_run(ours, cli_run)
    assert ours.parameters["scenario.seed"] == 17


def test_simulate_from_a_dict_is_bit_identical_to_the_command_line(cli, tmp_path):
    keys = {"scenario": {"agents": 6, "partners": 5, "gains": "random", "seed": 4},
            "dynamics.rule": "gumbel", "dynamics.temperature": 0.1, "dynamics.rounds": 30,
            "dynamics.window": 10, "dynamics.burn_in": 10}
    path = tmp_path / "cli.h5"
    cli("simulate", "--scenario.agents", 6, "--scenario.partners", 5, "--scenario.gains", "random",
        "--scenario.seed", 4, "--dynamics.rule", "gumbel", "--dynamics.temperature", 0.1,
        "--dynamics.rounds", 30, "--dynamics.window", 10, "--dynamics.burn_in", 10, "--out", path, "--quiet")
    assert_same_run(allocsim.simulate(keys, threads=2), path)


def test_an_unknown_experiment_key_names_it():
    with pytest.raises(ValueError, match=r"^experiment\['dynamics.rulez'\]"):
        allocsim.simulate({"dynamics.rulez": "price"})
    with pytest.raises(ValueError, match=r"^experiment:2"):
        allocsim.simulate("[dynamics]\nrule = teleport\n")


def test_read_results_matches_h5py(cli_run):
    results = allocsim.read_results(cli_run)
    assert isinstance(results.summary, pd.DataFrame) and len(results.summary) == 1
    with h5py.File(cli_run, "r") as f:
        assert results.runs == sorted(f["runs"])
        for column, dataset in f["summary"].items():
            values = dataset[()]
            if values.dtype.kind in "OS":
                assert list(results.summary[column]) == [v.decode() for v in values], column
            else:
                assert np.array_equal(results.summary[column].to_numpy(), values), column
        assert results.attributes["format"] == f.attrs["format"]
    run = allocsim.read_run(cli_run)
    assert run.run == results.runs[0] and run.snapshots.ndim == 3


def test_a_file_that_is_not_a_results_file_names_the_path(tmp_path):
    path = tmp_path / "not.h5"
    path.write_text("hello")
    with pytest.raises(ValueError, match=str(path)):
        allocsim.read_results(path)
