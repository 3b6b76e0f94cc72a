"""Cases of inputs: errors found up front (data files of an experiment,
directories, thread counts, memory), and numbers at the edge."""
import json
import os

import h5py
import numpy as np

from harness import case, sweep_text, write_problem

FILE_SWEEP = """[scenario]
gains = file
gains_file = {gains}
budgets = {budgets_kind}
budgets_file = {budgets}
capacities = uniform
[dynamics]
rounds = 40
units = 600
burn_in = 10
window = 10
[sweep]
dynamics.temperature = 0.05, 0.1
[output]
file = out.h5
"""


def file_sweep(t, gains="g.csv", budgets="", budgets_kind="uniform"):
    return t.write("s.ini", FILE_SWEEP.format(gains=gains, budgets=budgets, budgets_kind=budgets_kind))


def nothing_written(t):
    t.absent("out.h5", "out.h5.parts")
    t.no_leftovers()


# --- 7. data files of an experiment are checked before the first run -------

BAD_GAINS = {
    "a gains file with a NaN": ("1,2,3\n4,nan,6\n", ["g.csv"]),
    "a gains file with a ragged row": ("1,2,3\n4,5\n", ["g.csv"]),
    "a gains file with text in a cell": ("1,2,3\n4,x,6\n", ["g.csv"]),
    "an empty gains file": ("", ["g.csv"]),
    "a gains file with an infinite cell": ("1,2,3\n4,inf,6\n", ["g.csv"]),
}
for title, (text, says) in BAD_GAINS.items():
    def make(text=text, says=says):
        def run(t):
            t.write("g.csv", text)
            file_sweep(t)
            r = t.allocsim("run", "s.ini", "--quiet")
            t.expect(r, 2, says=says + ["s.ini:3"])
            nothing_written(t)
        return run
    case("up-front", f"run: {title} is refused before the first run, naming the INI line")(make())


@case("up-front", "run: a missing gains file is refused before the first run")
def _(t):
    file_sweep(t, gains="missing.csv")
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["missing.csv", "s.ini:3"])
    nothing_written(t)


@case("up-front", "run: budgets of the wrong length are refused before the first run")
def _(t):
    t.write("g.csv", "1,2,3\n4,5,6\n")
    t.write("b.csv", "1\n2\n3\n")
    file_sweep(t, budgets="b.csv", budgets_kind="file")
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["b.csv", "s.ini:5"])
    nothing_written(t)


@case("up-front", "run: a negative budget is refused before the first run")
def _(t):
    t.write("g.csv", "1,2,3\n4,5,6\n")
    t.write("b.csv", "1\n-2\n")
    file_sweep(t, budgets="b.csv", budgets_kind="file")
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["b.csv", "s.ini:5"])
    nothing_written(t)


@case("up-front", "run: gains whose shape differs from scenario.agents are refused before the first run")
def _(t):
    t.write("g.csv", "1,2,3\n4,5,6\n")
    file_sweep(t)
    r = t.allocsim("run", "s.ini", "--scenario.agents", "3", "--scenario.partners", "3", "--quiet")
    t.expect(r, 2, says=["g.csv"])
    nothing_written(t)


@case("up-front", "run: a bad file that only one swept point names is refused before any run")
def _(t):
    t.write("good.csv", "1,2,3\n4,5,6\n")
    t.write("bad.csv", "1,2,3\n4,nan,6\n")
    t.write("s.ini", FILE_SWEEP.format(gains="good.csv", budgets="", budgets_kind="uniform").replace(
        "dynamics.temperature = 0.05, 0.1", "scenario.gains_file = good.csv, bad.csv"))
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["bad.csv"])
    nothing_written(t)


@case("up-front", "run: an access file with an all-zero row is refused before the first run")
def _(t):
    t.write("g.csv", "1,2,3\n4,5,6\n")
    t.write("a.csv", "1,1,1\n0,0,0\n")
    file_sweep(t)
    with open(t.path("s.ini")) as f:
        text = f.read().replace("capacities = uniform", "capacities = uniform\naccess = file\naccess_file = a.csv")
    t.write("s.ini", text)
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["a.csv"])
    nothing_written(t)


@case("up-front", "run: a directory as the experiment is refused")
def _(t):
    os.makedirs(t.path("exp"))
    r = t.allocsim("run", "exp", "--quiet")
    t.expect(r, 2, says=["exp", "directory"])
    t.check(os.listdir(t.dir) == ["exp"], f"folder holds {os.listdir(t.dir)}")


@case("up-front", "simulate: a directory as --config is refused")
def _(t):
    os.makedirs(t.path("exp"))
    r = t.allocsim("simulate", "--config", "exp", "--quiet")
    t.expect(r, 2, says=["exp", "directory"])
    t.check(os.listdir(t.dir) == ["exp"], f"folder holds {os.listdir(t.dir)}")


@case("up-front", "run: a missing experiment file is refused")
def _(t):
    r = t.allocsim("run", "nope.ini", "--quiet")
    t.expect(r, 2, says=["nope.ini"])
    t.check(os.listdir(t.dir) == [], f"folder holds {os.listdir(t.dir)}")


for command in ("run", "simulate", "solve", "demo"):
    def make(command=command):
        def run(t):
            t.write("s.ini", sweep_text())
            write_problem(t)
            args = {"run": ["run", "s.ini"], "simulate": ["simulate", "--quiet"],
                    "solve": ["solve", "--gains", "gains.csv", "--budgets", "budgets.csv",
                              "--capacities", "capacities.csv", "--method", "entropic", "--epsilon", "1"],
                    "demo": ["demo", "--out-dir", "d"]}[command]
            r = t.allocsim(*args, "--threads", "100000", timeout=20)
            t.expect(r, 2, says=["--threads", "100000", "at most"])
            t.absent("out.h5", "results.h5", "d")
        return run
    case("up-front", f"{command} --threads 100000 is refused with the stated limit")(make())


@case("up-front", "run --threads 0 is refused")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--threads", "0")
    t.expect(r, 2, says=["--threads"])
    t.absent("out.h5")


@case("up-front", "run: a sweep whose runs cannot fit in memory is refused with the estimate")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--scenario.agents", "1000000", "--scenario.partners", "1000000", timeout=20)
    t.expect(r, 2, says=["scenario.agents", "needs about"])
    nothing_written(t)


@case("up-front", "run: one swept point too large for memory is refused before any run")
def _(t):
    t.write("s.ini", sweep_text().replace("replicates = 2", "scenario.agents = 6, 2000000\nreplicates = 1"))
    r = t.allocsim("run", "s.ini", "--scenario.partners", "1000000", timeout=20)
    t.expect(r, 2, says=["needs about"])
    nothing_written(t)


@case("up-front", "run: the memory limit of the environment is respected, threads counted")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--scenario.agents", "3000", "--scenario.partners", "3000",
                   "--threads", "4", env={"ALLOCSIM_MEMORY_LIMIT_BYTES": "1000000000"}, timeout=20)
    t.expect(r, 2, says=["needs about"])
    nothing_written(t)


@case("up-front", "synth: a set whose allocations cannot fit in memory is refused with the estimate")
def _(t):
    r = t.allocsim("synth", "--out-dir", "set", "--agents", "1000000", "--partners", "1000000", timeout=20)
    t.expect(r, 2, says=["needs about"])
    t.absent("set")


@case("up-front", "analyze --null-samples 1e11 is refused")
def _(t):
    write_problem(t)
    t.write("p.csv", "10,20,30\n40,50,60\n")
    r = t.allocsim("analyze", "--allocation", "p.csv", "--nulls", "curveball", "--null-samples", "100000000000")
    t.expect(r, 2, says=["--null-samples"])


@case("up-front", "run: burn_in >= rounds at one swept point is refused before any run")
def _(t):
    t.write("s.ini", sweep_text().replace("replicates = 2", "dynamics.rounds = 40, 5\nreplicates = 1"))
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["burn_in"])
    nothing_written(t)


@case("up-front", "run: an unknown key names file, line and the nearest key")
def _(t):
    t.write("s.ini", sweep_text().replace("units = 600", "unitz = 600"))
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["s.ini:9", "dynamics.units"])
    nothing_written(t)


# --- 8. numbers at the edge ----------------------------------------------------

def solve_json(t, gains, budgets="0.5\n0.5\n", capacities="0.25\n0.25\n0.5\n", *extra):
    write_problem(t, gains=gains, budgets=budgets, capacities=capacities)
    r = t.allocsim("solve", "--gains", "gains.csv", "--budgets", "budgets.csv", "--capacities",
                   "capacities.csv", "--json", *extra)
    try:
        return r, json.loads(r.out.strip().splitlines()[-1]) if r.out.strip() else None
    except json.JSONDecodeError:
        return r, None


def coupling(t, gains, budgets="0.5\n0.5\n", capacities="0.25\n0.25\n0.5\n", *extra):
    write_problem(t, gains=gains, budgets=budgets, capacities=capacities)
    r = t.allocsim("solve", "--gains", "gains.csv", "--budgets", "budgets.csv", "--capacities",
                   "capacities.csv", "--out", "p.csv", *extra)
    if r.code != 0:
        return r, None
    return r, np.loadtxt(t.path("p.csv"), delimiter=",")


def scaled_problem_answer(t, gains_rows, scale):
    """The coupling of the same problem with the gains divided by `scale`."""
    text = "\n".join(",".join(repr(v / scale) for v in row) for row in gains_rows) + "\n"
    return coupling(t, text)[1]


EDGE_GAINS = {
    "gains of 1e308": [[1e308, 1e308, 1e308], [1e308, 1e308, 1e308]],
    "gains of +-1e308": [[1e308, -1e308, 1e308], [-1e308, 1e308, -1e308]],
    "gains from -1e308 to 1e308 in steps": [[-1e308, 0, 1e308], [5e307, -5e307, 0]],
    "gains of 1.7e308": [[1.7e308, 1e308, 0], [0, 1.7e308, 1e308]],
    "gains of 1e-308": [[1e-308, 2e-308, 3e-308], [3e-308, 2e-308, 1e-308]],
    "gains of 5e-324 and 0": [[5e-324, 0, 0], [0, 0, 5e-324]],
}
for title, rows in EDGE_GAINS.items():
    def make(rows=rows):
        def run(t):
            text = "\n".join(",".join(repr(v) for v in row) for row in rows) + "\n"
            r, out = solve_json(t, text)
            if r.code == 2:  # a clear refusal is allowed
                t.expect(r, 2, says=["gains.csv"])
                return
            t.check(r.code == 0, f"exit {r.code}: {r.err[-300:]}")
            t.check(out is not None and out.get("status") == "optimal", f"status {out and out.get('status')}")
            if out:
                t.check(out.get("total_gain") is not None and np.isfinite(out["total_gain"]),
                        f"total gain {out.get('total_gain')}")
                # Outside reference: the exact optimum does not change when every gain is divided by a constant.
                expected = np.array(rows) @ np.zeros(3) if False else None
            _, p = coupling(t, text)
            scale = max(abs(v) for row in rows for v in row) or 1.0
            q = scaled_problem_answer(t, rows, scale)
            if p is not None and q is not None:
                gains = np.array(rows) / scale
                t.check(abs((gains * p).sum() - (gains * q).sum()) <= 1e-9 * max(1, abs((gains * q).sum())),
                        f"coupling's gain {(gains * p).sum()} differs from the scaled problem's {(gains * q).sum()}")
        return run
    case("edge", f"solve exact with {title}: a correct answer or a clear refusal")(make())


@case("edge", "solve exact with gains of 1e308 and masses of 1e3 refuses a total gain beyond double")
def _(t):
    r, out = solve_json(t, "1e308,1e308,1e308\n1e308,1e308,1e308\n", "500\n500\n", "250\n250\n500\n")
    ok = r.code == 2 or (r.code == 0 and out and np.isfinite(out.get("total_gain") or np.inf))
    t.check(ok, f"exit {r.code}, {r.out[-200:]!r} {r.err[-200:]!r}")
    t.check("inf" not in r.out.lower(), f"inf printed: {r.out[-200:]!r}")


@case("edge", "solve entropic with gains of 1e308 gives no NaN or inf")
def _(t):
    r, out = solve_json(t, "1e308,-1e308,1e308\n-1e308,1e308,-1e308\n", "0.5\n0.5\n", "0.25\n0.25\n0.5\n",
                        "--method", "entropic", "--epsilon-of-range", "0.1")
    t.check(r.code in (0, 1, 2), f"exit {r.code}")
    t.check("nan" not in r.out.lower() and "inf" not in r.out.lower(), f"NaN or inf printed: {r.out[-300:]!r}")


@case("edge", "the message about masses below the resolution names an option that exists")
def _(t):
    n = 3
    write_problem(t, gains="1,2,3\n4,5,6\n7,8,9\n", budgets="1\n1\n1e-14\n", capacities="1\n1\n1e-14\n")
    r = t.allocsim("solve", "--gains", "gains.csv", "--budgets", "budgets.csv", "--capacities", "capacities.csv")
    text = r.out + r.err
    if "mass_units" in text or "mass-units" in text:
        help_text = t.allocsim("solve", "--help").out
        t.check("--mass-units" in text and "--mass-units" in help_text,
                f"the message names an option solve does not have: {text[-300:]!r}")
        r2 = t.allocsim("solve", "--gains", "gains.csv", "--budgets", "budgets.csv", "--capacities",
                        "capacities.csv", "--mass-units", "1e15")
        t.check(r2.code == 0 and "unshipped" not in (r2.out + r2.err), f"--mass-units 1e15: {r2!r}")


def newer_file(t, version):
    r = t.allocsim("simulate", "--scenario.agents", "4", "--scenario.partners", "3", "--dynamics.rounds", "30",
                   "--dynamics.burn_in", "5", "--dynamics.window", "5", "--out", "res.h5", "--quiet")
    t.expect(r, 0)
    with h5py.File(t.path("res.h5"), "a") as f:
        f.attrs["format_version"] = np.int64(version)
    t.snapshot("res.h5")


for command in ("inspect", "analyze", "plot"):
    def make(command=command):
        def run(t):
            newer_file(t, 99)
            r = t.allocsim(command, "res.h5", *(["--out-dir", "fig"] if command == "plot" else []))
            t.expect(r, 2, says=["res.h5", "format version", "99"])
            t.unchanged("res.h5")
            t.absent("fig")
        return run
    case("edge", f"{command} refuses a results file of a newer format_version")(make())


@case("edge", "analyze --write refuses a results file of a newer format_version, file unchanged")
def _(t):
    newer_file(t, 2)
    r = t.allocsim("analyze", "res.h5", "--write")
    t.expect(r, 2, says=["format version"])
    t.unchanged("res.h5")


@case("edge", "run refuses to resume into a results file of a newer format_version")
def _(t):
    t.write("s.ini", sweep_text(output="res.h5"))
    newer_file(t, 99)
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["res.h5"])
    t.unchanged("res.h5")


@case("edge", "run reads an experiment file that starts with a byte-order mark")
def _(t):
    t.write("s.ini", "\ufeff" + sweep_text(), mode="w")
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=6)


@case("edge", "run reads an experiment file with a byte-order mark and CRLF line ends")
def _(t):
    with open(t.path("s.ini"), "wb") as f:
        f.write(b"\xef\xbb\xbf" + sweep_text().replace("\n", "\r\n").encode())
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=6)


@case("edge", "simulate reads a --config file that starts with a byte-order mark")
def _(t):
    t.write("c.ini", "\ufeff[scenario]\nagents = 4\npartners = 3\n[dynamics]\nrounds = 30\nburn_in = 5\nwindow = 5\n")
    r = t.allocsim("simulate", "--config", "c.ini", "--out", "one.h5", "--quiet")
    t.expect(r, 0)
    t.results("one.h5", runs=1, check=lambda f: t.check(f["runs/run-000000"].attrs["scenario.agents"] == 4,
                                                        "agents not read"))


@case("edge", "a byte-order mark in the middle of an experiment file is an error naming its line")
def _(t):
    t.write("s.ini", sweep_text().replace("[dynamics]", "\ufeff[dynamics]"))
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["s.ini:6"])
    t.absent("out.h5")


@case("edge", "a key value of 1e400 is refused naming the key")
def _(t):
    t.write("s.ini", sweep_text().replace("units = 600", "units = 1e400"))
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["dynamics.units", "s.ini:9"])
    t.absent("out.h5")


@case("up-front", "run --replicates 99999999999 is refused at once, before any run is planned")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--replicates", "99999999999", timeout=20)
    t.expect(r, 2, says=["replicates", "more than a million runs"])
    nothing_written(t)


@case("up-front", "a grid of axes whose product exceeds a million runs is refused at once")
def _(t):
    t.write("s.ini", sweep_text().replace("replicates = 2", "scenario.seed = 1..5000\ndynamics.rounds = 10..5000\nreplicates = 1"))
    r = t.allocsim("run", "s.ini", timeout=20)
    t.expect(r, 2, says=["more than a million runs"])
    nothing_written(t)


@case("edge", "synth --units 1e300 is refused (it once became 1 unit per case)")
def _(t):
    r = t.allocsim("synth", "--out-dir", "set", "--units", "1e300", "--replicates", "1")
    t.expect(r, 2, says=["--units", "1e300"])
    t.absent("set")


@case("edge", "synth --units loguniform(1, 1e20) is refused naming the law")
def _(t):
    r = t.allocsim("synth", "--out-dir", "set", "--units", "loguniform(1, 1e20)", "--replicates", "1")
    t.expect(r, 2, says=["--units", "loguniform(1, 1e20)"])
    t.absent("set")
