"""analyze returns the object `allocsim analyze --json` prints, and aligns
pandas inputs by their labels."""
import json

import numpy as np
import pandas as pd
import pytest

import allocsim
from conftest import counts_case, write_csv


def cli_analyze(cli, tmp_path, counts, gains, *options):
    """The command line's JSON; its "allocation" names the file, ours the argument."""
    return cli.json("analyze", "--allocation", write_csv(tmp_path / "p.csv", counts), "--gains",
                    write_csv(tmp_path / "g.csv", gains), *options)


def test_analyze_equals_the_command_line(cli, tmp_path):
    counts, gains = counts_case(11)
    ours = allocsim.analyze(counts, gains)
    theirs = cli_analyze(cli, tmp_path, counts, gains)
    assert ours.pop("allocation") == "allocation" and theirs.pop("allocation").endswith("p.csv")
    # How files were matched (by label or position) exists for files only.
    assert ours.pop("matching") == [] and theirs.pop("matching")
    assert ours == theirs


def test_analyze_without_gains_equals_the_command_line(cli, tmp_path):
    counts, _ = counts_case(13)
    ours = allocsim.analyze(counts)
    theirs = cli.json("analyze", "--allocation", write_csv(tmp_path / "p.csv", counts))
    for key in ("allocation", "matching"):
        ours.pop(key), theirs.pop(key)
    assert ours["temperature"]["status"] == "no_gains"
    assert ours == theirs


@pytest.mark.parametrize("model", ["curveball", "bicm", "fixed-margins"])
def test_analyze_with_nulls_equals_the_command_line(cli, tmp_path, model):
    counts, gains = counts_case(12, 7, 9, units=400, eps_share=0.3)
    ours = allocsim.analyze(counts, gains, nulls=model, null_samples=30, seed=5,
                            binarize="min-count", threshold=2)
    theirs = cli_analyze(cli, tmp_path, counts, gains, "--nulls", model, "--null-samples", 30,
                         "--null-seed", 5, "--binarize", "min-count", "--threshold", 2)
    for key in ("allocation", "matching"):  # file names and how files were matched
        ours.pop(key), theirs.pop(key)
    assert ours == theirs
    assert ours["structure"]["nodf_null"]["model"] == model


def test_labelled_frames_are_aligned_and_labels_returned():
    counts, gains = counts_case(13, 5, 6)
    agents = [f"a{i}" for i in range(5)]
    partners = [f"p{j}" for j in range(6)]
    allocation = pd.DataFrame(counts, index=agents, columns=partners)
    shuffled = pd.DataFrame(gains, index=agents, columns=partners).iloc[::-1, [3, 1, 0, 2, 5, 4]]
    labelled = allocsim.analyze(allocation, shuffled)
    plain = allocsim.analyze(counts, gains)
    assert labelled.pop("agent_labels") == agents
    assert labelled.pop("partner_labels") == partners
    assert labelled == plain


def test_labels_that_differ_are_refused():
    counts, gains = counts_case(14, 4, 4)
    allocation = pd.DataFrame(counts, index=list("abcd"), columns=list("wxyz"))
    other = pd.DataFrame(gains, index=list("abce"), columns=list("wxyz"))
    with pytest.raises(ValueError, match="gains: row labels differ"):
        allocsim.analyze(allocation, other)
