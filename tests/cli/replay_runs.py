#!/usr/bin/env python3
"""Replayed runs equal the original dataset by dataset (read with h5py), and
runs say whether they settled.

  * `allocsim run tests/data/replay_sweep.ini`, then
    `simulate --from results.h5 --run run-000003 --out replay.h5`,
    `simulate --config replay_sweep.ini --point 3` and
    `simulate --config replay_sweep.ini --dynamics.temperature 0.2 --replicate 1`
    each give a run-000003 whose every dataset (scenario, allocation,
    prices, analysis couplings) and analysis attribute equals the sweep's;
  * /summary holds run_index, settled, capacity_error, window_change;
  * a price run at T = 1% of the gain range with the default 500 rounds is
    flagged (warning on stderr, "settled": false) and the same run with 3000
    rounds and a burn-in of 1500 is not; `analyze` of the first says it had
    not settled (text: a warning line and a caution under the temperature;
    JSON: temperature.stationary false, with the reason), of the second not;
  * --from without --run, and --point past the sweep, exit 2 with one line.
Prints one summary line; exits non-zero on any failure.
Usage: replay_runs.py --allocsim PATH --data DIR
"""

import json
import os
import subprocess
import sys
import tempfile

import h5py
import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

FAILURES = []
RUN = "run-000003"


def check(condition, what):
    if not condition:
        FAILURES.append(what)
        print("FAIL:", what, file=sys.stderr)


def datasets(group, prefix=""):
    out = {}
    for name, item in group.items():
        path = prefix + name
        if isinstance(item, h5py.Group):
            out.update(datasets(item, path + "/"))
        else:
            out[path] = item[()]
    return out


def same_run(a_path, b_path, what):
    with h5py.File(a_path, "r") as a, h5py.File(b_path, "r") as b:
        if RUN not in b["runs"]:
            check(False, what + ": " + RUN + " is there")
            return
        da, db = datasets(a["runs/" + RUN]), datasets(b["runs/" + RUN])
        check(sorted(da) == sorted(db), what + ": same dataset names " + str(sorted(set(da) ^ set(db))))
        for name in da:
            if name in db:
                check(np.array_equal(da[name], db[name], equal_nan=da[name].dtype.kind == "f"),
                      what + ": dataset " + name + " equal")
        aa, ab = dict(a["runs/" + RUN + "/analysis"].attrs), dict(b["runs/" + RUN + "/analysis"].attrs)
        for name, value in aa.items():
            check(name in ab and (value == ab[name] or (isinstance(value, float) and np.isnan(value)
                                                        and np.isnan(ab[name]))),
                  what + ": analysis attribute " + name)
        for key in ("seed", "run_index", "dynamics.temperature", "settled", "capacity_error"):
            check(a["runs/" + RUN].attrs.get(key) == b["runs/" + RUN].attrs.get(key),
                  what + ": run attribute " + key)


def run(command, cwd):
    return subprocess.run(command, capture_output=True, text=True, cwd=cwd)


def main():
    parser = test_parser()
    args = parser.parse_args()
    exe, sweep = args.allocsim, os.path.join(args.data, "replay_sweep.ini")
    with tempfile.TemporaryDirectory() as folder:
        done = run([exe, "run", sweep, "--quiet", "--output.file", "sweep.h5"], folder)
        check(done.returncode == 0, "run exits 0: " + done.stderr)
        original = os.path.join(folder, "sweep.h5")
        with h5py.File(original, "r") as f:
            summary = f["summary"]
            for column in ("run_index", "settled", "capacity_error", "window_change", "seed"):
                check(column in summary, "summary column " + column)
            check(list(summary["run_index"][()]) == [0, 1, 2, 3], "run_index is the run number")
        replays = {
            "--from": [exe, "simulate", "--quiet", "--from", "sweep.h5", "--run", RUN, "--out", "a.h5"],
            "--point": [exe, "simulate", "--quiet", "--config", sweep, "--point", "3", "--out", "b.h5"],
            "swept keys": [exe, "simulate", "--quiet", "--config", sweep, "--dynamics.temperature", "0.2",
                           "--replicate", "1", "--out", "c.h5"],
        }
        for (what, command), out in zip(replays.items(), ("a.h5", "b.h5", "c.h5")):
            done = run(command, folder)
            check(done.returncode == 0, what + " exits 0: " + done.stderr)
            if done.returncode == 0:
                same_run(original, os.path.join(folder, out), what)

        low = [exe, "simulate", "--quiet", "--json", "--scenario.gains", "random", "--scenario.capacities",
               "zipf", "--dynamics.temperature", "0.01"]
        short = run(low + ["--out", "short.h5"], folder)
        check(short.returncode == 0 and json.loads(short.stdout)["settled"] is False,
              "500 rounds at T = 1% of the range: not settled")
        check("not settled" in short.stderr and "dynamics.burn_in" in short.stderr,
              "the unsettled run is warned about, with advice: " + short.stderr)
        long = run(low + ["--dynamics.rounds", "3000", "--dynamics.burn_in", "1500", "--out", "long.h5"], folder)
        check(long.returncode == 0 and json.loads(long.stdout)["settled"] is True,
              "3000 rounds with burn-in 1500: settled")
        check("not settled" not in long.stderr, "no warning for the settled run")

        # The analysis of the unsettled run says so, in text and JSON; the settled one does not.
        text = run([exe, "analyze", "short.h5"], folder)
        lines = text.stdout.splitlines()
        warned = [k for k, line in enumerate(lines) if line.startswith("warning: run-000000 had not settled")]
        fitted = [k for k, line in enumerate(lines) if line.startswith("temperature:")]
        check(text.returncode == 0 and len(warned) == 1 and "capacity error" in lines[warned[0]]
              and "dynamics.burn_in" in lines[warned[0]], "analyze names the unsettled run: " + text.stdout[:600])
        check(len(fitted) == 1 and fitted[0] + 1 < len(lines) and "non-stationary" in lines[fitted[0] + 1],
              "analyze flags the temperature of the unsettled run")
        report = run([exe, "analyze", "short.h5", "--json"], folder)
        temperature = json.loads(report.stdout)["temperature"] if report.returncode == 0 else {}
        check(temperature.get("stationary") is False and "had not settled" in temperature.get("not_stationary", ""),
              "analyze --json flags the unsettled run's temperature: %s" % temperature.get("not_stationary"))
        settled = run([exe, "analyze", "long.h5", "--json"], folder)
        temperature = json.loads(settled.stdout)["temperature"] if settled.returncode == 0 else {}
        check(settled.returncode == 0 and "stationary" not in temperature and "not_stationary" not in temperature,
              "analyze --json of the settled run: not flagged")
        check("had not settled" not in run([exe, "analyze", "long.h5"], folder).stdout,
              "analyze of the settled run warns about nothing")

        for what, command in {
            "--from without --run": [exe, "simulate", "--from", "sweep.h5", "--out", "x.h5"],
            "--point past the sweep": [exe, "simulate", "--config", sweep, "--point", "4", "--out", "x.h5"],
        }.items():
            done = run(command, folder)
            check(done.returncode == 2 and done.stderr.count("\n") == 1, what + ": exit 2, one line: " + done.stderr)
            check(not os.path.exists(os.path.join(folder, "x.h5")), what + ": no file")
    print("replay_runs: %s" % ("ok" if not FAILURES else "%d failures" % len(FAILURES)))
    return 1 if FAILURES else 0


if __name__ == "__main__":
    sys.exit(main())
