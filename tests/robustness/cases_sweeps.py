"""Cases of `allocsim run`: the identity of a sweep on resume and on a
finished file, swept keys on the command line, orphans, locks, signals
and the progress bar."""
import os
import pty
import re
import signal
import subprocess
import time

import h5py
import numpy as np

from harness import (Skip, case, dead_pid, default_signals, interrupt_sweep, slow_text, sweep_text)

RUNS = 6  # runs of sweep_text(): 3 temperatures x 2 replicates


def rounds_of(f):
    return sorted({int(f["runs"][r].attrs["dynamics.rounds"]) for r in f["runs"]})


def attr_values(f, key):
    return [f["runs"][r].attrs[key] for r in sorted(f["runs"])]


# --- 1. the identity of a sweep: resume -------------------------------------

def partial(t, rounds=1200, extra=""):
    t.write("s.ini", slow_text(rounds=rounds, extra=extra))
    return interrupt_sweep(t, "s.ini", parts_wanted=1)


@case("identity", "a resume with another command-line value is refused")
def _(t):
    if not partial(t):
        return
    t.snapshot("out.h5.parts")
    r = t.allocsim("run", "s.ini", "--dynamics.rounds", "900")
    t.expect(r, 2, says=["out.h5", "dynamics.rounds", "--restart"])
    t.absent("out.h5")
    t.unchanged("out.h5.parts")


@case("identity", "a resume with another seed on the command line is refused")
def _(t):
    if not partial(t):
        return
    t.snapshot("out.h5.parts")
    r = t.allocsim("run", "s.ini", "--scenario.seed", "7")
    t.expect(r, 2, says=["scenario.seed"])
    t.absent("out.h5")
    t.unchanged("out.h5.parts")


@case("identity", "a resume after editing a value in the file is refused")
def _(t):
    if not partial(t):
        return
    t.snapshot("out.h5.parts")
    t.write("s.ini", slow_text(rounds=1100))
    r = t.allocsim("run", "s.ini")
    t.expect(r, 2, says=["dynamics.rounds", "--restart"])
    t.absent("out.h5")
    t.unchanged("out.h5.parts")


@case("identity", "a resume with the same command-line value finishes every run at that value")
def _(t):
    t.write("s.ini", slow_text())
    if not interrupt_sweep(t, "s.ini", "--dynamics.rounds", "1000"):
        return
    r = t.allocsim("run", "s.ini", "--dynamics.rounds", "1000", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=8, check=lambda f: t.check(rounds_of(f) == [1000], f"rounds {rounds_of(f)}"))
    t.no_leftovers()


@case("identity", "a resume whose file now holds the value given before on the command line finishes")
def _(t):
    t.write("s.ini", slow_text())
    if not interrupt_sweep(t, "s.ini", "--dynamics.rounds", "1000"):
        return
    t.write("s.ini", slow_text(rounds=1000))
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=8, check=lambda f: t.check(rounds_of(f) == [1000], f"rounds {rounds_of(f)}"))


@case("identity", "a resume after reformatting the file (comments, spacing, order) finishes")
def _(t):
    if not partial(t):
        return
    text = slow_text().replace("rounds = 1200", "rounds   =   1200   # more rounds")
    text = "# reformatted\n\n" + text.replace("[output]\nfile = out.h5\n", "")
    t.write("s.ini", "[output]\nfile = out.h5\n\n" + text)
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=8)


@case("identity", "a resume that writes a default value out explicitly finishes")
def _(t):
    if not partial(t):
        return
    t.write("s.ini", slow_text(extra="[analysis]\nconfidence = 0.95\n"))
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=8)


@case("identity", "a resume with another value and --restart runs every run at the new value")
def _(t):
    if not partial(t):
        return
    r = t.allocsim("run", "s.ini", "--dynamics.rounds", "300", "--restart", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=8, check=lambda f: t.check(rounds_of(f) == [300], f"rounds {rounds_of(f)}"))
    t.no_leftovers()


@case("identity", "a resume with another axis (--sweep.KEY) is refused")
def _(t):
    if not partial(t):
        return
    t.snapshot("out.h5.parts")
    r = t.allocsim("run", "s.ini", "--sweep.dynamics.temperature", "0.05, 0.1, 0.2, 0.3")
    t.expect(r, 2, says=["dynamics.temperature", "--restart"])
    t.unchanged("out.h5.parts")


@case("identity", "a resume with other replicates is refused")
def _(t):
    if not partial(t):
        return
    t.snapshot("out.h5.parts")
    r = t.allocsim("run", "s.ini", "--replicates", "3")
    t.expect(r, 2, says=["replicates", "--restart"])
    t.unchanged("out.h5.parts")


@case("identity", "a resume after a data file changed is refused")
def _(t):
    t.write("g.csv", "\n".join(",".join(str((i * 7 + j * 3) % 5) for j in range(15)) for i in range(20)) + "\n")
    text = slow_text().replace("gains = random", "gains = file\ngains_file = g.csv")
    t.write("s.ini", text)
    if not interrupt_sweep(t, "s.ini"):
        return
    t.snapshot("out.h5.parts")
    t.write("g.csv", "\n".join(",".join(str((i * 5 + j) % 7) for j in range(15)) for i in range(20)) + "\n")
    r = t.allocsim("run", "s.ini")
    t.expect(r, 2, says=["g.csv", "--restart"])
    t.unchanged("out.h5.parts")


# --- 1. the identity of a sweep: finished files -----------------------------

def finished(t, extra_args=()):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--quiet", *extra_args)
    t.expect(r, 0)
    t.snapshot("out.h5")


@case("identity", "a finished file and the same command: left alone, said so, exit 0")
def _(t):
    finished(t)
    r = t.allocsim("run", "s.ini")
    t.expect(r, 0, says=["out.h5", "already", "--restart"])
    t.unchanged("out.h5")


@case("identity", "a finished file keeps what analyze --write stored")
def _(t):
    finished(t)
    r = t.allocsim("analyze", "out.h5", "--write")
    t.expect(r, 0)
    t.snapshot("out.h5")
    r = t.allocsim("run", "s.ini")
    t.expect(r, 0, says=["already"])
    t.unchanged("out.h5")
    t.results("out.h5", runs=RUNS, check=lambda f: t.check(
        all("temperature_epsilon" in f["runs"][r]["analysis"].attrs or len(f["runs"][r]["analysis"].attrs) > 0
            for r in f["runs"]), "analysis attributes lost"))


@case("identity", "a finished file and another command-line value: refused, file unchanged")
def _(t):
    finished(t)
    r = t.allocsim("run", "s.ini", "--dynamics.rounds", "60")
    t.expect(r, 2, says=["out.h5", "dynamics.rounds", "--restart"])
    t.unchanged("out.h5")


@case("identity", "a finished file and an edited experiment: refused, file unchanged")
def _(t):
    finished(t)
    t.write("s.ini", sweep_text(units=700))
    r = t.allocsim("run", "s.ini")
    t.expect(r, 2, says=["dynamics.units", "--restart"])
    t.unchanged("out.h5")


@case("identity", "a finished file and a longer axis: refused, file unchanged")
def _(t):
    finished(t)
    r = t.allocsim("run", "s.ini", "--sweep.dynamics.temperature", "0.05, 0.1, 0.2, 0.4")
    t.expect(r, 2, says=["dynamics.temperature"])
    t.unchanged("out.h5")


@case("identity", "a finished file and more replicates: refused naming sweep.replicates, file unchanged")
def _(t):
    finished(t)
    r = t.allocsim("run", "s.ini", "--replicates", "3")
    t.expect(r, 2, says=["sweep.replicates is 2 there, 3 now"])
    t.unchanged("out.h5")


@case("identity", "a finished file and a key swept now but not then: refused naming the axis")
def _(t):
    finished(t)
    r = t.allocsim("run", "s.ini", "--sweep.dynamics.price_step", "0.2, 0.5")
    t.expect(r, 2, says=["sweep.dynamics.price_step"])
    t.unchanged("out.h5")


@case("identity", "a finished file and --restart with another value: replaced at the new value")
def _(t):
    finished(t)
    r = t.allocsim("run", "s.ini", "--dynamics.rounds", "60", "--restart", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=RUNS, check=lambda f: t.check(rounds_of(f) == [60], f"rounds {rounds_of(f)}"))


@case("identity", "a finished file and the same command with --csv: the table is written, the file left alone")
def _(t):
    finished(t)
    r = t.allocsim("run", "s.ini", "--csv", "table.csv")
    t.expect(r, 0)
    t.unchanged("out.h5")
    lines = t.csv_rows("table.csv", min_rows=RUNS + 1)
    t.check(len(lines) == RUNS + 1, f"table.csv has {len(lines)} lines")


@case("identity", "the stored experiment says the values the runs were made with")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--dynamics.rounds", "60", "--quiet")
    t.expect(r, 0)

    def stored(f):
        text = f.attrs["experiment"]
        return t.check(re.search(r"rounds\s*=\s*60|--dynamics.rounds 60", text) is not None,
                       "the experiment attribute does not say rounds = 60") and \
            t.check(rounds_of(f) == [60], f"rounds {rounds_of(f)}")
    t.results("out.h5", runs=RUNS, check=stored)


@case("identity", "a finished simulate file given as a sweep's output is refused")
def _(t):
    r = t.allocsim("simulate", "--scenario.agents", "4", "--scenario.partners", "3",
                   "--dynamics.rounds", "30", "--dynamics.burn_in", "5", "--dynamics.window", "5",
                   "--out", "out.h5", "--quiet")
    t.expect(r, 0)
    t.snapshot("out.h5")
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini")
    t.expect(r, 2, says=["out.h5", "--restart"])
    t.unchanged("out.h5")


# --- 2. swept keys on the command line --------------------------------------

@case("swept", "a command-line value of a swept key is refused, naming the key and its axis")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--dynamics.temperature", "0.1")
    t.expect(r, 2, says=["--dynamics.temperature", "s.ini:13", "--sweep.dynamics.temperature"])
    t.absent("out.h5", "out.h5.parts")


@case("swept", "a command-line value of a swept key in key=value form is refused")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--dynamics.temperature=0.3")
    t.expect(r, 2, says=["--dynamics.temperature"])
    t.absent("out.h5", "out.h5.parts")


@case("swept", "a command-line value of a swept scenario key is refused")
def _(t):
    t.write("s.ini", sweep_text().replace("replicates = 2", "scenario.agents = 4, 6\nreplicates = 1"))
    r = t.allocsim("run", "s.ini", "--scenario.agents", "5")
    t.expect(r, 2, says=["--scenario.agents", "swept"])
    t.absent("out.h5", "out.h5.parts")


@case("swept", "--sweep.KEY replaces an axis")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--sweep.dynamics.temperature", "0.3, 0.6", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=4, check=lambda f: t.check(
        sorted(set(np.round(attr_values(f, "dynamics.temperature"), 6))) == [0.3, 0.6],
        f"temperatures {attr_values(f, 'dynamics.temperature')}"))


@case("swept", "--sweep.KEY takes a spaced range")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--sweep.dynamics.temperature", "log(0.01, 1, 3)", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=6, check=lambda f: t.check(
        np.allclose(sorted(set(attr_values(f, "dynamics.temperature"))), [0.01, 0.1, 1.0]),
        f"temperatures {attr_values(f, 'dynamics.temperature')}"))


@case("swept", "--sweep.KEY adds an axis that the file does not sweep")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--sweep.dynamics.price_step", "0.5, 1", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=12)


@case("swept", "--replicates sets the replicate count")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--replicates", "3", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=9)


@case("swept", "--replicates works for an experiment without [sweep]")
def _(t):
    t.write("s.ini", sweep_text().replace("dynamics.temperature = 0.05, 0.1, 0.2\nreplicates = 2\n", ""))
    r = t.allocsim("run", "s.ini", "--replicates", "2", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=2, check=lambda f: t.check(
        len(set(attr_values(f, "seed"))) >= 1 and len(set(attr_values(f, "replicate"))) == 2, "replicates"))


@case("swept", "--replicates 0 is refused")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--replicates", "0")
    t.expect(r, 2, says=["--replicates"])
    t.absent("out.h5", "out.h5.parts")


@case("swept", "a bad --sweep.KEY value is refused naming the option")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--sweep.dynamics.temperature", "0.1, -2")
    t.expect(r, 2, says=["--sweep.dynamics.temperature", "-2"])
    t.absent("out.h5", "out.h5.parts")


@case("swept", "--sweep.KEY with an unknown key names the nearest one")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--sweep.dynamics.temprature", "0.1, 0.2")
    t.expect(r, 2, says=["dynamics.temperature"])
    t.absent("out.h5", "out.h5.parts")


@case("swept", "an unknown option followed by its value names the nearest option (simulate, run)")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("simulate", "--dynamics.temprature", "0.1", "--out", "one.h5")
    t.expect(r, 2, says=["--dynamics.temprature", "dynamics.temperature"])
    r = t.allocsim("run", "s.ini", "--treads", "2")
    t.expect(r, 2, says=["--treads", "--threads"])
    t.absent("one.h5", "out.h5", "out.h5.parts")


@case("swept", "an unambiguous abbreviation of an option still works (run --thread 1)")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--thread", "1", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=RUNS)


@case("swept", "--sweep.KEY that breaks combine = zip is refused")
def _(t):
    t.write("s.ini", sweep_text().replace("replicates = 2", "dynamics.price_step = 0.2, 0.5, 1\ncombine = zip"))
    r = t.allocsim("run", "s.ini", "--sweep.dynamics.temperature", "0.1, 0.2")
    t.expect(r, 2, says=["zip"])
    t.absent("out.h5", "out.h5.parts")


@case("swept", "a value of a key that is not swept still overrides the file")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--dynamics.rounds", "50", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=RUNS, check=lambda f: t.check(rounds_of(f) == [50], f"rounds {rounds_of(f)}"))


# --- 5. orphans --------------------------------------------------------------

@case("orphans", "a temporary results file of a dead process is removed by the next run")
def _(t):
    t.write("s.ini", sweep_text())
    t.write(f"out.h5.tmp-{dead_pid()}", "half a file")
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=RUNS)
    t.no_leftovers()


@case("orphans", "a temporary part of a dead process is removed by the next run")
def _(t):
    if not partial(t):
        return
    t.write(f"out.h5.parts/run-000003.h5.tmp-{dead_pid()}", "half a part")
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=8)
    t.no_leftovers()


@case("orphans", "a temporary file of a living process is left alone")
def _(t):
    t.write("s.ini", sweep_text())
    sleeper = subprocess.Popen(["sleep", "30"])
    try:
        t.write(f"out.h5.tmp-{sleeper.pid}", "being written")
        t.snapshot(f"out.h5.tmp-{sleeper.pid}")
        r = t.allocsim("run", "s.ini", "--quiet")
        t.expect(r, 0)
        t.unchanged(f"out.h5.tmp-{sleeper.pid}")
    finally:
        sleeper.kill()
        sleeper.wait()


@case("orphans", "simulate removes a temporary file of its output left by a dead process")
def _(t):
    t.write(f"one.h5.tmp-{dead_pid()}", "half a file")
    r = t.allocsim("simulate", "--scenario.agents", "4", "--scenario.partners", "3",
                   "--dynamics.rounds", "30", "--dynamics.burn_in", "5", "--dynamics.window", "5",
                   "--out", "one.h5", "--quiet")
    t.expect(r, 0)
    t.results("one.h5", runs=1)
    t.no_leftovers()


@case("orphans", "temporary files of other outputs are not touched")
def _(t):
    t.write("s.ini", sweep_text())
    name = f"other.h5.tmp-{dead_pid()}"
    t.write(name, "someone else's")
    t.snapshot(name)
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.unchanged(name)


@case("orphans", "a kill during the merge leaves nothing the next run does not clean")
def _(t):
    t.write("s.ini", slow_text(rounds=300))
    for attempt in range(6):
        p = t.start("run", "s.ini", "--threads", "2", "--quiet")
        t.wait_for(lambda: any(n.startswith("out.h5.tmp-") for n in os.listdir(t.dir)), timeout=60, process=p)
        if p.poll() is None:
            p.kill()
        p.communicate()
        if not t.exists("out.h5"):
            break
        os.remove(t.path("out.h5"))
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=8)
    t.no_leftovers()


# --- 6. one output, two processes --------------------------------------------

@case("lock", "a second run on the same output says who holds it and exits 2")
def _(t):
    t.write("s.ini", slow_text(rounds=1500))
    first = t.start("run", "s.ini", "--threads", "1", "--quiet")
    t.wait_for(lambda: t.exists("out.h5.parts"), timeout=60, process=first)
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["out.h5", f"pid {first.pid}"])
    out, err = first.communicate(timeout=300)
    t.check(first.returncode == 0, f"the first run ended with {first.returncode}: {err[-300:]}")
    t.results("out.h5", runs=8)
    t.no_leftovers()


@case("lock", "a second run with --restart does not disturb the first")
def _(t):
    t.write("s.ini", slow_text(rounds=1500))
    first = t.start("run", "s.ini", "--threads", "1", "--quiet")
    t.wait_for(lambda: t.exists("out.h5.parts"), timeout=60, process=first)
    r = t.allocsim("run", "s.ini", "--restart", "--quiet")
    t.expect(r, 2, says=[f"pid {first.pid}"])
    first.communicate(timeout=300)
    t.check(first.returncode == 0, f"the first run ended with {first.returncode}")
    t.results("out.h5", runs=8)


@case("lock", "simulate into a sweep's output while the sweep runs is refused")
def _(t):
    t.write("s.ini", slow_text(rounds=1500))
    first = t.start("run", "s.ini", "--threads", "1", "--quiet")
    t.wait_for(lambda: t.exists("out.h5.parts"), timeout=60, process=first)
    r = t.allocsim("simulate", "--scenario.agents", "4", "--scenario.partners", "3",
                   "--dynamics.rounds", "30", "--dynamics.burn_in", "5", "--dynamics.window", "5",
                   "--out", "out.h5", "--quiet")
    t.expect(r, 2, says=[f"pid {first.pid}"])
    first.communicate(timeout=300)
    t.results("out.h5", runs=8)


@case("lock", "the lock of a killed run does not block the next one")
def _(t):
    if not partial(t):
        return
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=8)
    t.no_leftovers()


@case("lock", "a finished run leaves no lock file behind")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.check(sorted(os.listdir(t.dir)) == ["out.h5", "s.ini"], f"folder holds {sorted(os.listdir(t.dir))}")


# --- 9. signals and the progress bar ---------------------------------------

def interrupt_with(t, sig):
    t.write("s.ini", slow_text(rounds=1500))
    p = t.start("run", "s.ini", "--threads", "1")
    parts = t.path("out.h5.parts")
    t.wait_for(lambda: os.path.isdir(parts) and any(n.endswith(".h5") and n.startswith("run-")
                                                    for n in os.listdir(parts)), timeout=60, process=p)
    p.send_signal(sig)
    try:
        out, err = p.communicate(timeout=60)
    except subprocess.TimeoutExpired:
        p.kill()
        out, err = p.communicate()
        return "timeout", err
    return p.returncode, err


@case("signals", "Ctrl-C (SIGINT) stops a sweep with exit 130 and keeps its runs")
def _(t):
    code, err = interrupt_with(t, signal.SIGINT)
    t.check(code == 130, f"exit {code}: {err[-300:]}")
    t.absent("out.h5")
    t.check(len(os.listdir(t.path("out.h5.parts"))) >= 2, "no runs kept")
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=8)


@case("signals", "SIGTERM stops a sweep with exit 143 and keeps its runs")
def _(t):
    code, err = interrupt_with(t, signal.SIGTERM)
    t.check(code == 143, f"exit {code}: {err[-300:]}")
    t.absent("out.h5")
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=8)


def interrupt_simulate(t, sig):
    p = t.start("simulate", "--scenario.agents", "60", "--scenario.partners", "50",
                "--dynamics.rounds", "200000", "--dynamics.units", "20000", "--out", "one.h5", "--quiet")
    t.wait_for(lambda: any(".tmp-" in n for n in os.listdir(t.dir)), timeout=60, process=p)
    time.sleep(0.2)
    p.send_signal(sig)
    try:
        out, err = p.communicate(timeout=30)
    except subprocess.TimeoutExpired:
        p.kill()
        out, err = p.communicate()
        return "timeout", err
    return p.returncode, err


@case("signals", "Ctrl-C stops simulate with exit 130 and leaves no file")
def _(t):
    code, err = interrupt_simulate(t, signal.SIGINT)
    t.check(code == 130, f"exit {code}: {err[-300:]}")
    t.check(os.listdir(t.dir) == [], f"left behind: {os.listdir(t.dir)}")


@case("signals", "SIGTERM stops simulate with exit 143 and leaves no file")
def _(t):
    code, err = interrupt_simulate(t, signal.SIGTERM)
    t.check(code == 143, f"exit {code}: {err[-300:]}")
    t.check(os.listdir(t.dir) == [], f"left behind: {os.listdir(t.dir)}")


def run_on_terminal(t, args, interrupt_after_parts=None, timeout=120):
    """Runs allocsim with stderr on a pseudo-terminal; returns (exit code, what the terminal got)."""
    master, slave = pty.openpty()
    p = subprocess.Popen([t.binary, *args], cwd=t.dir, stdout=subprocess.DEVNULL, stderr=slave,
                         stdin=subprocess.DEVNULL, preexec_fn=default_signals)
    t.processes.append(p)
    os.close(slave)
    screen = bytearray()
    interrupted = False
    end = time.time() + timeout
    while time.time() < end:
        try:
            chunk = os.read(master, 4096)
        except OSError:
            chunk = b""
        if not chunk:
            if p.poll() is not None:
                break
            continue
        screen += chunk
        if interrupt_after_parts and not interrupted:
            parts = t.path("out.h5.parts")
            if os.path.isdir(parts) and len([n for n in os.listdir(parts) if n.endswith(".h5")]) >= interrupt_after_parts:
                p.send_signal(signal.SIGINT)
                interrupted = True
    p.wait(timeout=60)
    os.close(master)
    return p.returncode, screen.decode(errors="replace")


@case("signals", "after a resume the bar counts every run of the sweep and ends at N/N")
def _(t):
    if not partial(t):
        return
    code, screen = run_on_terminal(t, ["run", "s.ini", "--threads", "1"])
    t.check(code == 0, f"exit {code}")
    counts = re.findall(r"(\d+)/(\d+) runs", screen)
    t.check(counts and counts[-1] == ("8", "8"), f"last count {counts[-1:] if counts else None}")
    t.check(all(int(a) >= 2 for a, _ in counts), f"counts restart below the kept runs: {counts[:3]}")


@case("signals", "the bar clears the rest of its line when it is redrawn")
def _(t):
    t.write("s.ini", slow_text(rounds=300))
    code, screen = run_on_terminal(t, ["run", "s.ini", "--threads", "1"])
    t.check(code == 0, f"exit {code}")
    redraws = screen.split("\r")[1:]
    t.check(len(redraws) >= 2, f"{len(redraws)} redraws")
    t.check(all(r.startswith("\x1b[K") or r.startswith("\x1b[2K") or r.startswith("[") and "\x1b[K" in r
                or r.strip() == "" for r in redraws),
            f"a redraw does not clear its line: {redraws[:2]!r}")


@case("signals", "'stopped' is printed on a line of its own after Ctrl-C")
def _(t):
    t.write("s.ini", slow_text(rounds=1500))
    code, screen = run_on_terminal(t, ["run", "s.ini", "--threads", "1"], interrupt_after_parts=1)
    t.check(code == 130, f"exit {code}")
    lines = screen.replace("\r\n", "\n").split("\n")
    stopped = [line for line in lines if "stopped" in line]
    t.check(stopped and all(line.split("\r")[-1].lstrip("\x1b[K").startswith("allocsim run")
                            for line in stopped), f"'stopped' shares a line: {stopped!r}")


@case("signals", "README documents exit codes 130 and 143")
def _(t):
    readme = os.path.join(os.path.dirname(t.data), "..", "README.md")
    with open(readme) as f:
        text = f.read()
    t.check("130" in text and "143" in text and "SIGTERM" in text, "README lacks 130 / 143 / SIGTERM")
