"""Cases of output files across every command: devices and FIFOs, symlinks,
an output that is an input or another output, --restart on files the tool
did not write, and a full disk (a small tmpfs)."""
import os

import h5py

from harness import FifoReader, Skip, case, sweep_text, write_problem

SIM = ["--scenario.agents", "4", "--scenario.partners", "3", "--dynamics.rounds", "30",
       "--dynamics.burn_in", "5", "--dynamics.window", "5", "--quiet"]


def simulate(t, out, *extra):
    return t.allocsim("simulate", *SIM, "--out", out, *extra)


def solve(t, out, *extra, prefix=""):
    write_problem(t, prefix)
    return t.allocsim("solve", "--gains", prefix + "gains.csv", "--budgets", prefix + "budgets.csv",
                      "--capacities", prefix + "capacities.csv", "--out", out, *extra)


def benchmark_set(t, folder="set"):
    r = t.allocsim("synth", "--out-dir", folder, "--families", "random", "--epsilon", "0.1, 0.2",
                   "--replicates", "1", "--agents", "5", "--partners", "4", "--units", "300")
    t.expect(r, 0)
    with open(t.path(folder + "/truth.csv")) as f:
        rows = f.read().splitlines()[1:]
    t.write("answers.csv", "case,epsilon\n" + "".join(row.split(",")[0] + ",0.1\n" for row in rows))


def results_file(t, name="res.h5"):
    r = simulate(t, name)
    t.expect(r, 0)
    return name


# --- 3. devices and FIFOs ----------------------------------------------------

@case("outputs", "simulate --out a FIFO is refused without blocking; the FIFO stays")
def _(t):
    t.fifo("pipe")
    r = simulate(t, "pipe")
    t.expect(r, 2, says=["pipe", "not a regular file"])
    t.kind("pipe", "fifo")
    t.no_leftovers()


@case("outputs", "simulate --out a character device is refused; the device stays")
def _(t):
    t.null_device("null")
    r = simulate(t, "null")
    t.expect(r, 2, says=["null", "not a regular file"])
    t.kind("null", "chardev")
    t.no_leftovers()


@case("outputs", "run with output.file a character device is refused; nothing is written")
def _(t):
    t.null_device("null")
    t.write("s.ini", sweep_text(output="null"))
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["null", "not a regular file"])
    t.kind("null", "chardev")
    t.no_leftovers()


@case("outputs", "run with output.file a FIFO is refused without blocking")
def _(t):
    t.fifo("pipe")
    t.write("s.ini", sweep_text(output="pipe"))
    r = t.allocsim("run", "s.ini", "--quiet", timeout=60)
    t.expect(r, 2, says=["pipe", "not a regular file"])
    t.kind("pipe", "fifo")
    t.no_leftovers()


@case("outputs", "solve --out a character device writes through; the device stays")
def _(t):
    t.null_device("null")
    r = solve(t, "null")
    t.expect(r, 0)
    t.kind("null", "chardev")
    t.no_leftovers()


@case("outputs", "solve --out a FIFO writes the coupling through it")
def _(t):
    t.fifo("pipe")
    reader = FifoReader(t.path("pipe"))
    r = solve(t, "pipe")
    data = reader.close().decode()
    t.expect(r, 0)
    t.kind("pipe", "fifo")
    t.check(len([line for line in data.splitlines() if line]) == 2, f"the FIFO got {data!r}")


@case("outputs", "run --csv a character device writes through; the device stays")
def _(t):
    t.null_device("null")
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--csv", "null", "--quiet")
    t.expect(r, 0)
    t.kind("null", "chardev")
    t.results("out.h5", runs=6)
    t.no_leftovers()


@case("outputs", "run --csv a FIFO writes the table through it")
def _(t):
    t.fifo("pipe")
    t.write("s.ini", sweep_text())
    reader = FifoReader(t.path("pipe"))
    r = t.allocsim("run", "s.ini", "--csv", "pipe", "--quiet")
    data = reader.close().decode()
    t.expect(r, 0)
    t.kind("pipe", "fifo")
    t.check(len(data.splitlines()) == 7, f"the FIFO got {len(data.splitlines())} lines")


@case("outputs", "score --out a character device writes through; the device stays")
def _(t):
    benchmark_set(t)
    t.null_device("null")
    r = t.allocsim("score", "--truth", "set/truth.csv", "--answers", "answers.csv", "--out", "null")
    t.expect(r, 0)
    t.kind("null", "chardev")


@case("outputs", "analyze --write into a character device is refused")
def _(t):
    t.null_device("null")
    r = t.allocsim("analyze", "null", "--write")
    t.check(r.code == 2, f"exit {r.code}")
    t.kind("null", "chardev")


@case("outputs", "plot --out-dir a character device is refused; the device stays")
def _(t):
    results_file(t)
    t.null_device("null")
    r = t.allocsim("plot", "res.h5", "--out-dir", "null")
    t.check(r.code == 2, f"exit {r.code}: {r.err[-200:]}")
    t.kind("null", "chardev")


@case("outputs", "synth --out-dir a FIFO is refused; the FIFO stays")
def _(t):
    t.fifo("pipe")
    r = t.allocsim("synth", "--out-dir", "pipe", "--replicates", "1", timeout=60)
    t.expect(r, 2, says=["pipe"])
    t.kind("pipe", "fifo")


# --- 3. symlinks -------------------------------------------------------------

@case("outputs", "simulate --out a symlink writes the link's target and keeps the link")
def _(t):
    os.makedirs(t.path("real"))
    os.symlink("real/one.h5", t.path("link.h5"))
    r = simulate(t, "link.h5")
    t.expect(r, 0)
    t.kind("link.h5", "symlink")
    t.results("real/one.h5", runs=1)


@case("outputs", "run with output.file a symlink writes the target and keeps the link")
def _(t):
    os.makedirs(t.path("real"))
    os.symlink("real/out.h5", t.path("link.h5"))
    t.write("s.ini", sweep_text(output="link.h5"))
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.kind("link.h5", "symlink")
    t.results("real/out.h5", runs=6)


@case("outputs", "solve --out a symlink writes the target and keeps the link")
def _(t):
    t.write("real.csv", "old\n")
    os.symlink("real.csv", t.path("link.csv"))
    r = solve(t, "link.csv")
    t.expect(r, 0)
    t.kind("link.csv", "symlink")
    t.csv_rows("real.csv", min_rows=2)


@case("outputs", "run --csv a symlink writes the target and keeps the link")
def _(t):
    t.write("real.csv", "old\n")
    os.symlink("real.csv", t.path("link.csv"))
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--csv", "link.csv", "--quiet")
    t.expect(r, 0)
    t.kind("link.csv", "symlink")
    t.csv_rows("real.csv", min_rows=7)


@case("outputs", "score --out a symlink writes the target and keeps the link")
def _(t):
    benchmark_set(t)
    t.write("real.csv", "old\n")
    os.symlink("real.csv", t.path("link.csv"))
    r = t.allocsim("score", "--truth", "set/truth.csv", "--answers", "answers.csv", "--out", "link.csv")
    t.expect(r, 0)
    t.kind("link.csv", "symlink")
    t.csv_rows("real.csv", min_rows=3)


@case("outputs", "analyze --write on a symlinked results file updates the target and keeps the link")
def _(t):
    results_file(t, "real.h5")
    os.symlink("real.h5", t.path("link.h5"))
    r = t.allocsim("analyze", "link.h5", "--write")
    t.expect(r, 0)
    t.kind("link.h5", "symlink")
    t.results("real.h5", runs=1, check=lambda f: t.check(
        len(f["runs/run-000000/analysis"].attrs) > 0, "no analysis stored"))


@case("outputs", "a symlink to a missing folder is refused, the link kept")
def _(t):
    os.symlink("nowhere/one.h5", t.path("link.h5"))
    r = simulate(t, "link.h5")
    t.expect(r, 2, says=["link.h5"])
    t.kind("link.h5", "symlink")


# --- 3. an output that is an input or another output --------------------------

@case("outputs", "run with output.file the experiment file itself is refused")
def _(t):
    t.write("s.ini", sweep_text(output="s.ini"))
    t.snapshot("s.ini")
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["s.ini", "experiment"])
    t.unchanged("s.ini")
    t.no_leftovers()


@case("outputs", "run --restart with output.file the experiment file is refused")
def _(t):
    t.write("s.ini", sweep_text(output="s.ini"))
    t.snapshot("s.ini")
    r = t.allocsim("run", "s.ini", "--restart", "--quiet")
    t.expect(r, 2, says=["s.ini"])
    t.unchanged("s.ini")


@case("outputs", "run --csv equal to output.file is refused; nothing is written")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--csv", "out.h5", "--quiet")
    t.expect(r, 2, says=["--csv", "out.h5"])
    t.absent("out.h5", "out.h5.parts")


@case("outputs", "run --csv equal to the experiment file is refused")
def _(t):
    t.write("s.ini", sweep_text())
    t.snapshot("s.ini")
    r = t.allocsim("run", "s.ini", "--csv", "s.ini", "--quiet")
    t.expect(r, 2, says=["--csv", "s.ini"])
    t.unchanged("s.ini")
    t.absent("out.h5")


@case("outputs", "run --csv through another path to the same file is refused")
def _(t):
    t.write("s.ini", sweep_text())
    os.makedirs(t.path("sub"))
    r = t.allocsim("run", "s.ini", "--csv", "sub/../out.h5", "--quiet")
    t.expect(r, 2, says=["out.h5"])
    t.absent("out.h5")


@case("outputs", "run with output.file a data file of the experiment is refused")
def _(t):
    t.write("g.csv", "1,2,3\n4,5,6\n")
    t.write("s.ini", sweep_text(output="g.csv").replace("agents = 6\npartners = 5\ngains = random",
                                                         "gains = file\ngains_file = g.csv"))
    t.snapshot("g.csv")
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["g.csv"])
    t.unchanged("g.csv")


@case("outputs", "run with output.file a symlink to the experiment file is refused")
def _(t):
    t.write("s.ini", sweep_text(output="alias.ini"))
    os.symlink("s.ini", t.path("alias.ini"))
    t.snapshot("s.ini")
    r = t.allocsim("run", "s.ini", "--restart", "--quiet")
    t.expect(r, 2, says=["alias.ini"])
    t.unchanged("s.ini")


@case("outputs", "simulate --out the --config file is refused")
def _(t):
    t.write("c.ini", "[dynamics]\nrounds = 30\nburn_in = 5\nwindow = 5\n")
    t.snapshot("c.ini")
    r = t.allocsim("simulate", "--config", "c.ini", "--out", "c.ini", "--quiet")
    t.expect(r, 2, says=["c.ini"])
    t.unchanged("c.ini")


@case("outputs", "simulate --out its gains file is refused")
def _(t):
    t.write("g.csv", "1,2,3\n4,5,6\n")
    t.snapshot("g.csv")
    r = t.allocsim("simulate", "--scenario.gains", "file", "--scenario.gains_file", "g.csv",
                   "--dynamics.rounds", "30", "--dynamics.burn_in", "5", "--dynamics.window", "5",
                   "--out", "g.csv", "--quiet")
    t.expect(r, 2, says=["g.csv"])
    t.unchanged("g.csv")


@case("outputs", "solve --out its gains file is refused, the gains unchanged")
def _(t):
    write_problem(t)
    t.snapshot("gains.csv")
    r = t.allocsim("solve", "--gains", "gains.csv", "--budgets", "budgets.csv", "--capacities",
                   "capacities.csv", "--out", "gains.csv")
    t.expect(r, 2, says=["gains.csv"])
    t.unchanged("gains.csv")


@case("outputs", "solve --out its budgets file is refused")
def _(t):
    write_problem(t)
    t.snapshot("budgets.csv")
    r = t.allocsim("solve", "--gains", "gains.csv", "--budgets", "budgets.csv", "--capacities",
                   "capacities.csv", "--out", "budgets.csv")
    t.expect(r, 2, says=["budgets.csv"])
    t.unchanged("budgets.csv")


@case("outputs", "solve --out its access file through a symlink is refused")
def _(t):
    write_problem(t)
    t.write("access.csv", "1,1,1\n1,1,1\n")
    os.symlink("access.csv", t.path("alias.csv"))
    t.snapshot("access.csv")
    r = t.allocsim("solve", "--gains", "gains.csv", "--budgets", "budgets.csv", "--capacities",
                   "capacities.csv", "--access", "access.csv", "--out", "alias.csv")
    t.expect(r, 2, says=["alias.csv"])
    t.unchanged("access.csv")


@case("outputs", "score --out the answers file is refused")
def _(t):
    benchmark_set(t)
    t.snapshot("answers.csv")
    r = t.allocsim("score", "--truth", "set/truth.csv", "--answers", "answers.csv", "--out", "answers.csv")
    t.expect(r, 2, says=["answers.csv"])
    t.unchanged("answers.csv")


@case("outputs", "score --out the truth file is refused")
def _(t):
    benchmark_set(t)
    t.snapshot("set")
    r = t.allocsim("score", "--truth", "set/truth.csv", "--answers", "answers.csv", "--out", "set/truth.csv")
    t.expect(r, 2, says=["truth.csv"])
    t.unchanged("set")


# --- 3. outputs that exist: directories, files the tool did not write -------

@case("outputs", "simulate --out a directory is refused, the directory unchanged")
def _(t):
    t.write("d/keep.txt", "keep")
    t.snapshot("d")
    r = simulate(t, "d")
    t.expect(r, 2, says=["d", "directory"])
    t.unchanged("d")


@case("outputs", "solve --out a directory is refused")
def _(t):
    t.write("d/keep.txt", "keep")
    t.snapshot("d")
    r = solve(t, "d")
    t.expect(r, 2, says=["directory"])
    t.unchanged("d")


@case("outputs", "run with output.file a directory is refused")
def _(t):
    t.write("d/keep.txt", "keep")
    t.snapshot("d")
    t.write("s.ini", sweep_text(output="d"))
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["directory"])
    t.unchanged("d")
    t.absent("d.parts")


@case("outputs", "simulate --out a file allocsim did not write is refused")
def _(t):
    t.write("notes.h5", "my notes, not HDF5")
    t.snapshot("notes.h5")
    r = simulate(t, "notes.h5")
    t.expect(r, 2, says=["notes.h5", "not written by allocsim"])
    t.unchanged("notes.h5")


@case("outputs", "simulate --out an HDF5 file of another program is refused")
def _(t):
    with h5py.File(t.path("other.h5"), "w") as f:
        f["x"] = [1, 2, 3]
    t.snapshot("other.h5")
    r = simulate(t, "other.h5")
    t.expect(r, 2, says=["other.h5", "not written by allocsim"])
    t.unchanged("other.h5")


@case("outputs", "simulate --out an earlier results file replaces it")
def _(t):
    results_file(t, "one.h5")
    r = t.allocsim("simulate", *[a if a != "30" else "40" for a in SIM], "--out", "one.h5")
    t.expect(r, 0)
    t.results("one.h5", runs=1, check=lambda f: t.check(
        f["runs/run-000000"].attrs["dynamics.rounds"] == 40, "not replaced"))


@case("outputs", "run --restart over a file allocsim did not write is refused")
def _(t):
    t.write("out.h5", "precious")
    t.snapshot("out.h5")
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--restart", "--quiet")
    t.expect(r, 2, says=["out.h5", "--restart"])
    t.unchanged("out.h5")


@case("outputs", "run --restart over an HDF5 file of another program is refused")
def _(t):
    with h5py.File(t.path("out.h5"), "w") as f:
        f["x"] = [1, 2, 3]
    t.snapshot("out.h5")
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--restart", "--quiet")
    t.expect(r, 2, says=["out.h5"])
    t.unchanged("out.h5")


@case("outputs", "run without --restart over a file allocsim did not write is refused")
def _(t):
    t.write("out.h5", "precious")
    t.snapshot("out.h5")
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 2, says=["out.h5"])
    t.unchanged("out.h5")


@case("outputs", "run --restart keeps files of others in the parts folder")
def _(t):
    t.write("s.ini", sweep_text())
    t.write("out.h5.parts/my-notes.txt", "mine")
    t.snapshot("out.h5.parts/my-notes.txt")
    r = t.allocsim("run", "s.ini", "--restart", "--quiet")
    t.check(r.code in (0, 2), f"exit {r.code}")
    t.unchanged("out.h5.parts/my-notes.txt")


@case("outputs", "run --restart replaces a results file of another experiment")
def _(t):
    t.write("s.ini", sweep_text())
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    r = t.allocsim("run", "s.ini", "--dynamics.units", "500", "--restart", "--quiet")
    t.expect(r, 0)
    t.results("out.h5", runs=6, check=lambda f: t.check(
        all(f["runs"][x].attrs["dynamics.units"] == 500 for x in f["runs"]), "not replaced"))


@case("outputs", "demo --out-dir a file is refused, the file unchanged")
def _(t):
    t.write("folder", "a file")
    t.snapshot("folder")
    r = t.allocsim("demo", "--out-dir", "folder")
    t.check(r.code == 2, f"exit {r.code}: {r.err[-200:]}")
    t.unchanged("folder")


@case("outputs", "synth --out-dir a file is refused, the file unchanged")
def _(t):
    t.write("folder", "a file")
    t.snapshot("folder")
    r = t.allocsim("synth", "--out-dir", "folder", "--replicates", "1")
    t.expect(r, 2, says=["folder"])
    t.unchanged("folder")


@case("outputs", "an output keeps the permissions of the file it replaces")
def _(t):
    write_problem(t)
    t.write("out.csv", "old\n")
    os.chmod(t.path("out.csv"), 0o600)
    r = solve(t, "out.csv")
    t.expect(r, 0)
    mode = os.stat(t.path("out.csv")).st_mode & 0o777
    t.check(mode == 0o600, f"mode is {oct(mode)}")


# --- 4. a full disk ------------------------------------------------------------

def full_disk(t, leave_kib, size_kib=4096):
    disk = t.tmpfs("disk", size_kib)
    t.fill(disk, leave_kib)
    return disk


def only(t, folder, names):
    present = sorted(n for n in os.listdir(t.path(folder)) if n != "filler")
    t.check(present == sorted(names), f"{folder} holds {present}, expected {sorted(names)}")


BIG = ["--scenario.agents", "80", "--scenario.partners", "70", "--dynamics.rounds", "400",
       "--dynamics.units", "20000", "--dynamics.burn_in", "10", "--dynamics.window", "5", "--quiet"]


@case("disk-full", "simulate on a full disk: one line naming file and cause, exit 1, nothing left")
def _(t):
    full_disk(t, 64)
    r = t.allocsim("simulate", *BIG, "--out", "disk/one.h5")
    t.expect(r, 1, says=["disk/one.h5", "no space left on device"])
    only(t, "disk", [])


@case("disk-full", "simulate on a full disk leaves an earlier file unchanged")
def _(t):
    disk = t.tmpfs("disk", 4096)
    r = t.allocsim("simulate", *SIM, "--out", "disk/one.h5")
    t.expect(r, 0)
    t.snapshot("disk/one.h5")
    t.fill(disk, 64)
    r = t.allocsim("simulate", *BIG, "--out", "disk/one.h5")
    t.expect(r, 1, says=["no space left on device"])
    t.unchanged("disk/one.h5")
    only(t, "disk", ["one.h5"])


@case("disk-full", "run whose parts do not fit: exit 1, the finished parts kept and readable")
def _(t):
    full_disk(t, 300)
    t.write("s.ini", sweep_text(output="disk/out.h5", rounds=400).replace("agents = 6\npartners = 5",
                                                                            "agents = 60\npartners = 50"))
    r = t.allocsim("run", "s.ini", "--threads", "1", "--quiet")
    t.expect(r, 1, says=["no space left on device"])
    t.absent("disk/out.h5")
    parts = t.path("disk/out.h5.parts")
    if os.path.isdir(parts):
        for name in os.listdir(parts):
            t.check(".tmp-" not in name, f"temporary part left: {name}")
            if name.endswith(".h5"):
                t.results(os.path.join("disk/out.h5.parts", name), runs=1)
    t.no_leftovers("disk") if not os.path.isdir(parts) else None


@case("disk-full", "run whose merge does not fit: exit 1, parts kept, and a rerun with room finishes")
def _(t):
    disk = t.tmpfs("disk", 2048)
    t.write("s.ini", sweep_text(output="disk/out.h5", rounds=300).replace("agents = 6\npartners = 5",
                                                                            "agents = 40\npartners = 30"))
    # Fill so that the parts fit but not a second copy of them.
    probe = t.allocsim("run", "s.ini", "--threads", "1", "--quiet", "--csv", "probe.csv")
    t.expect(probe, 0)
    size_kib = os.path.getsize(t.path("disk/out.h5")) // 1024
    os.remove(t.path("disk/out.h5"))
    filler = t.fill(disk, size_kib + size_kib // 2)
    r = t.allocsim("run", "s.ini", "--threads", "1", "--quiet")
    t.expect(r, 1, says=["disk/out.h5", "no space left on device"])
    t.absent("disk/out.h5")
    names = os.listdir(t.path("disk"))
    t.check(not any(".tmp-" in n for n in names), f"temporary left: {names}")
    t.check(os.path.isdir(t.path("disk/out.h5.parts")), "the parts were lost")
    os.remove(filler)
    r = t.allocsim("run", "s.ini", "--quiet")
    t.expect(r, 0)
    t.results("disk/out.h5", runs=6)
    only(t, "disk", ["out.h5"])


@case("disk-full", "solve --out on a full disk: exit 1, no partial CSV")
def _(t):
    full_disk(t, 0, size_kib=256)
    n = 60
    t.write("g.csv", "\n".join(",".join(str((i * j) % 7) for j in range(n)) for i in range(n)) + "\n")
    t.write("b.csv", "\n".join("1" for _ in range(n)) + "\n")
    r = t.allocsim("solve", "--gains", "g.csv", "--budgets", "b.csv", "--capacities", "b.csv",
                   "--method", "entropic", "--epsilon", "1", "--out", "disk/p.csv")
    t.expect(r, 1, says=["disk/p.csv", "no space left on device"])
    only(t, "disk", [])


@case("disk-full", "run --csv on a full disk: exit 1, the results file complete, no partial CSV")
def _(t):
    disk = t.tmpfs("disk", 1024)
    t.write("s.ini", sweep_text())
    t.fill(disk, 0)
    r = t.allocsim("run", "s.ini", "--csv", "disk/table.csv", "--quiet")
    t.expect(r, 1, says=["disk/table.csv", "no space left on device"])
    t.results("out.h5", runs=6)
    only(t, "disk", [])


@case("disk-full", "analyze --write on a full disk: exit 1, the results file unchanged")
def _(t):
    disk = t.tmpfs("disk", 2048)
    r = t.allocsim("simulate", *SIM, "--out", "disk/one.h5")
    t.expect(r, 0)
    t.snapshot("disk/one.h5")
    t.fill(disk, 0)
    r = t.allocsim("analyze", "disk/one.h5", "--write")
    t.expect(r, 1, says=["disk/one.h5", "no space left on device"])
    t.unchanged("disk/one.h5")
    only(t, "disk", ["one.h5"])


@case("disk-full", "synth on a full disk: exit 1, no partial set")
def _(t):
    full_disk(t, 16, size_kib=512)
    r = t.allocsim("synth", "--out-dir", "disk/set", "--families", "random", "--epsilon", "0.1, 0.2",
                   "--replicates", "3", "--agents", "30", "--partners", "20")
    t.expect(r, 1, says=["no space left on device"])
    only(t, "disk", [])


@case("disk-full", "score --out on a full disk: exit 1, no partial CSV")
def _(t):
    benchmark_set(t)
    full_disk(t, 0, size_kib=256)
    r = t.allocsim("score", "--truth", "set/truth.csv", "--answers", "answers.csv", "--out", "disk/s.csv")
    t.expect(r, 1, says=["disk/s.csv", "no space left on device"])
    only(t, "disk", [])


@case("disk-full", "plot on a full disk: exit 1, no truncated figure under its final name")
def _(t):
    results_file(t)
    r = t.allocsim("analyze", "res.h5", "--write")
    full_disk(t, 8, size_kib=512)
    r = t.allocsim("plot", "res.h5", "--out-dir", "disk/fig")
    t.expect(r, 1, says=["no space left on device"])
    fig = t.path("disk/fig")
    if os.path.isdir(fig):
        for name in os.listdir(fig):
            t.check(False, f"left in the figure folder: {name}")
    t.check(".png" not in r.out, f"figures listed as written: {r.out!r}")


# --- 5. more of the same classes, across the other commands -------------------

def analysis_inputs(t):
    t.write("alloc.csv", "10,20,30\n40,50,60\n")
    t.write("gains.csv", "1,5,2\n7,3,9\n")


def trend_file(t):
    t.write("s.ini", sweep_text())
    t.expect(t.allocsim("run", "s.ini", "--quiet"), 0)
    return ["trend", "out.h5", "--metric", "window_change", "--z", "none"]


@case("outputs", "analyze --save the allocation file is refused before any analysis, file unchanged")
def _(t):
    analysis_inputs(t)
    t.snapshot("alloc.csv")
    r = t.allocsim("analyze", "--allocation", "alloc.csv", "--gains", "gains.csv", "--save", "alloc.csv")
    t.expect(r, 2, says=["--save", "alloc.csv"])
    t.check("analysed" not in r.out, "analysed before refusing")
    t.unchanged("alloc.csv")


@case("outputs", "analyze --save the gains file through a symlink is refused, file and link unchanged")
def _(t):
    analysis_inputs(t)
    os.symlink("gains.csv", t.path("link.h5"))
    t.snapshot("gains.csv", "link.h5")
    r = t.allocsim("analyze", "--allocation", "alloc.csv", "--gains", "gains.csv", "--save", "link.h5")
    t.expect(r, 2, says=["--save", "gains.csv"])
    t.unchanged("gains.csv", "link.h5")


@case("outputs", "analyze --export-dir holding the allocation under an export's name is refused")
def _(t):
    analysis_inputs(t)
    t.write("ex/agents.csv", "10,20,30\n40,50,60\n")
    t.snapshot("ex")
    r = t.allocsim("analyze", "--allocation", "ex/agents.csv", "--export-dir", "ex")
    t.expect(r, 2, says=["--export-dir", "agents.csv"])
    t.unchanged("ex")


@case("outputs", "analyze: an input under the name of a gains-fit export is never overwritten")
def _(t):
    analysis_inputs(t)
    t.write("ex/model_table.csv", "1,5,2\n7,3,9\n")
    t.snapshot("ex/model_table.csv")
    r = t.allocsim("analyze", "--allocation", "alloc.csv", "--features", "ex/model_table.csv",
                   "--export-dir", "ex")
    t.expect(r, 2, says=["model_table.csv", "input"])
    t.unchanged("ex/model_table.csv")


@case("outputs", "analyze --save a symlink writes the target and keeps the link")
def _(t):
    analysis_inputs(t)
    os.symlink("target.h5", t.path("link.h5"))
    r = t.allocsim("analyze", "--allocation", "alloc.csv", "--gains", "gains.csv", "--save", "link.h5")
    t.expect(r, 0)
    t.kind("link.h5", "symlink")
    t.results("target.h5", runs=1)


@case("outputs", "analyze --save a character device is refused; the device stays")
def _(t):
    analysis_inputs(t)
    t.null_device("null")
    r = t.allocsim("analyze", "--allocation", "alloc.csv", "--gains", "gains.csv", "--save", "null")
    t.expect(r, 2, says=["null", "not a regular file"])
    t.kind("null", "chardev")


@case("outputs", "analyze --export-dir a file is refused, the file unchanged")
def _(t):
    analysis_inputs(t)
    t.snapshot("gains.csv")
    r = t.allocsim("analyze", "--allocation", "alloc.csv", "--export-dir", "gains.csv")
    t.expect(r, 2, says=["gains.csv"])
    t.unchanged("gains.csv")


@case("outputs", "trend --csv the results file is refused, the results unchanged")
def _(t):
    args = trend_file(t)
    t.snapshot("out.h5")
    r = t.allocsim(*args, "--csv", "out.h5")
    t.expect(r, 2, says=["--csv", "out.h5"])
    t.unchanged("out.h5")


@case("outputs", "trend --csv a character device writes through; the device stays")
def _(t):
    args = trend_file(t)
    t.null_device("null")
    r = t.allocsim(*args, "--csv", "null")
    t.expect(r, 0)
    t.kind("null", "chardev")


@case("outputs", "trend --csv a symlink writes the target and keeps the link")
def _(t):
    args = trend_file(t)
    os.symlink("table.csv", t.path("link.csv"))
    r = t.allocsim(*args, "--csv", "link.csv")
    t.expect(r, 0)
    t.kind("link.csv", "symlink")
    t.csv_rows("table.csv", min_rows=2)


@case("outputs", "score --groups-csv the answers file is refused")
def _(t):
    benchmark_set(t)
    t.snapshot("answers.csv")
    r = t.allocsim("score", "--truth", "set/truth.csv", "--answers", "answers.csv", "--groups-csv", "answers.csv")
    t.expect(r, 2, says=["--groups-csv", "answers.csv"])
    t.unchanged("answers.csv")


@case("outputs", "score --out twice the same file is refused")
def _(t):
    benchmark_set(t)
    r = t.allocsim("score", "--truth", "set/truth.csv", "--answers", "answers.csv", "--out", "s.csv",
                   "--out", "./s.csv")
    t.expect(r, 2, says=["s.csv"])
    t.absent("s.csv")


@case("outputs", "score --out a symlinked .h5 writes the target and keeps the link")
def _(t):
    benchmark_set(t)
    os.symlink("target.h5", t.path("link.h5"))
    r = t.allocsim("score", "--truth", "set/truth.csv", "--answers", "answers.csv", "--out", "link.h5")
    t.expect(r, 0)
    t.kind("link.h5", "symlink")
    t.kind("target.h5", "file")


@case("outputs", "score --out a FIFO writes the per-case CSV through it")
def _(t):
    benchmark_set(t)
    reader = FifoReader(t.fifo("pipe"))
    r = t.allocsim("score", "--truth", "set/truth.csv", "--answers", "answers.csv", "--out", "pipe")
    data = reader.close()
    t.expect(r, 0)
    t.check(data.startswith(b"case,"), f"read {data[:60]!r}")
    t.kind("pipe", "fifo")


@case("disk-full", "analyze --save on a full disk: exit 1 naming file and cause, nothing left")
def _(t):
    analysis_inputs(t)
    full_disk(t, 0, size_kib=256)
    r = t.allocsim("analyze", "--allocation", "alloc.csv", "--gains", "gains.csv", "--save", "disk/a.h5")
    t.expect(r, 1, says=["disk/a.h5", "no space left on device"])
    only(t, "disk", [])


@case("disk-full", "analyze --export-dir on a full disk: exit 1, no folder or partial file left")
def _(t):
    analysis_inputs(t)
    full_disk(t, 0, size_kib=256)
    r = t.allocsim("analyze", "--allocation", "alloc.csv", "--gains", "gains.csv", "--export-dir", "disk/ex/sub")
    t.expect(r, 1, says=["disk/ex/sub", "no space left on device"])
    only(t, "disk", [])


@case("disk-full", "trend --csv on a full disk: exit 1, no partial CSV")
def _(t):
    args = trend_file(t)
    full_disk(t, 0, size_kib=256)
    r = t.allocsim(*args, "--csv", "disk/t.csv")
    t.expect(r, 1, says=["disk/t.csv", "no space left on device"])
    only(t, "disk", [])


@case("disk-full", "score --out .h5 and --groups-csv on a full disk: exit 1, nothing left")
def _(t):
    benchmark_set(t)
    full_disk(t, 0, size_kib=256)
    r = t.allocsim("score", "--truth", "set/truth.csv", "--answers", "answers.csv", "--out", "disk/s.h5")
    t.expect(r, 1, says=["disk/s.h5", "no space left on device"])
    r = t.allocsim("score", "--truth", "set/truth.csv", "--answers", "answers.csv", "--groups-csv", "disk/g.csv")
    t.expect(r, 1, says=["disk/g.csv", "no space left on device"])
    only(t, "disk", [])


@case("disk-full", "demo on a full disk: exit 1 naming the cause, no folder left")
def _(t):
    full_disk(t, 0, size_kib=256)
    r = t.allocsim("demo", "--out-dir", "disk/demo")
    t.expect(r, 1, says=["disk/demo", "no space left on device"])
    only(t, "disk", [])


@case("disk-full", "run whose parts fill the disk midway: exit 1, one line, no crash, no temporaries")
def _(t):
    full_disk(t, 160, size_kib=1024)
    t.write("s.ini", sweep_text(output="disk/out.h5", rounds=400).replace("agents = 6\npartners = 5",
                                                                            "agents = 60\npartners = 50"))
    r = t.allocsim("run", "s.ini", "--threads", "2", "--quiet")
    t.expect(r, 1, says=["disk/out.h5", "no space left on device"])
    t.absent("disk/out.h5", "disk/out.h5.lock")
    parts = t.path("disk/out.h5.parts")
    for name in os.listdir(parts) if os.path.isdir(parts) else []:
        t.check(".tmp-" not in name, f"temporary part left: {name}")
        if name.endswith(".h5"):
            t.results(os.path.join("disk/out.h5.parts", name), runs=1)


@case("disk-full", "simulate filling the disk midway through its snapshots: exit 1, earlier file unchanged")
def _(t):
    disk = t.tmpfs("disk", 2048)
    r = t.allocsim("simulate", *SIM, "--out", "disk/one.h5")
    t.expect(r, 0)
    t.snapshot("disk/one.h5")
    t.fill(disk, 400)
    r = t.allocsim("simulate", *BIG, "--out", "disk/one.h5")
    t.expect(r, 1, says=["disk/one.h5", "no space left on device"])
    t.unchanged("disk/one.h5")
    only(t, "disk", ["one.h5"])
