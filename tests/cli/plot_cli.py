"""End-to-end checks of `allocsim plot`.

A small results file comes from `allocsim simulate`; a second copy gets, with
h5py, more runs at other temperatures, their analysis (couplings, temperature
estimates, distances, NODF/WNODF with null summaries) and a run whose name
holds gnuplot command syntax; a third copy splits the runs by a capacity law
(three laws per temperature, with NODF z-scores). Checks: every announced file exists and is a
valid PNG (signature and IHDR, PNG specification 5.2 and 11.2.2) of the
expected size; absent data are skipped with a note; `--by` draws one series
per law (picked and said on stdout when it is the only other swept key),
`--panels` one panel per law, and a key that is not swept is refused; the scripts of a fixed
file are the same at every generation; a hostile name runs nothing; bad
input gives one line on stderr and a non-zero exit."""
import os
import shutil
import struct
import subprocess
import sys
import tempfile

import h5py
import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

HOSTILE_RUN = "run'; system 'touch PWNED'; '`touch PWNED`"
SWEEP_FIGURES = ["nodf-vs-temperature", "wnodf-vs-temperature", "epsilon-vs-temperature",
                 "distance-vs-temperature", "trend-summary"]
LAWS = ["zipf", "uniform", "lognormal"]
failures = []


def check(condition, message):
    if not condition:
        failures.append(message)
        print("FAIL:", message)


def png_size(path):
    with open(path, "rb") as f:
        head = f.read(24)
    if len(head) < 24 or head[:8] != b"\x89PNG\r\n\x1a\n" or head[12:16] != b"IHDR":
        return None
    return struct.unpack(">II", head[16:24])


def run(binary, args, cwd):
    return subprocess.run([binary] + args, cwd=cwd, capture_output=True, text=True)


def simulate(binary, folder, name, temperature):
    result = run(binary, ["simulate", "--scenario.agents", "12", "--scenario.partners", "9",
                          "--scenario.capacities", "zipf", "--dynamics.temperature", str(temperature),
                          "--dynamics.rounds", "200", "--dynamics.burn_in", "50", "--dynamics.window", "25",
                          "--quiet", "--out", name], folder)
    if result.returncode != 0:
        sys.exit("allocsim simulate failed: " + result.stderr)
    return os.path.join(folder, name)


def entropic_like(p, spread):
    """A dense stand-in for an entropic coupling (the plot only draws it)."""
    q = p / p.sum() + spread / p.size
    return q / q.sum()


def exact_like(p):
    """A sparse stand-in for an exact coupling: one cell per row."""
    q = np.zeros_like(p)
    q[np.arange(p.shape[0]), np.argmax(p, axis=1)] = p.sum(axis=1)
    return q / q.sum()


def add_analysis(group, temperature, rng):
    total = group["allocation/total"][...]
    analysis = group.require_group("analysis")
    analysis.create_dataset("entropic", data=entropic_like(total, temperature))
    analysis.create_dataset("exact", data=exact_like(total))
    estimate = temperature * rng.uniform(0.8, 1.25)
    attributes = {"epsilon": estimate, "epsilon_ci_low": estimate * 0.7,
                  "epsilon_ci_high": estimate * 1.4,
                  "entropic_total_variation": 0.02 + 0.1 * temperature,
                  "exact_total_variation": 0.3 + temperature,
                  "nodf": 40 + 30 * temperature, "wnodf": 30 + 20 * temperature,
                  "nodf_null_model": "curveball", "nodf_null_mean": 35.0, "nodf_null_sd": 2.0,
                  "wnodf_null_model": "fixed-margins", "wnodf_null_mean": 25.0,
                  "wnodf_null_sd": 1.5}
    for key, value in attributes.items():
        analysis.attrs[key] = value


def make_sweep_file(binary, folder, base):
    """Copies the simulated run to several temperatures and adds analyses."""
    path = os.path.join(folder, "sweep.h5")
    shutil.copy(base, path)
    rng = np.random.default_rng(7)
    temperatures = [0.01, 0.03, 0.1, 0.3, 1.0]
    with h5py.File(path, "r+") as f:
        runs = f["runs"]
        names = ["run-000000"] + ["run-%06d" % k for k in range(1, len(temperatures))] + [HOSTILE_RUN]
        for name in names[1:]:
            f.copy(runs["run-000000"], runs, name=name)
        for index, (name, temperature) in enumerate(zip(names, temperatures + [0.05])):
            runs[name].attrs["run_index"] = index
            runs[name].attrs["dynamics.temperature"] = temperature
            add_analysis(runs[name], temperature, rng)
        del f["summary"]  # its single row no longer describes the runs
    return path


def make_by_file(folder, sweep):
    """The sweep's runs, three per temperature, one per capacity law, with NODF z-scores."""
    path = os.path.join(folder, "by.h5")
    shutil.copy(sweep, path)
    with h5py.File(path, "r+") as f:
        runs = f["runs"]
        del runs[HOSTILE_RUN]
        names = sorted(runs)
        for name in names:
            for law in LAWS[1:]:
                f.copy(runs[name], runs, name=name + "-" + law)
        for index, name in enumerate(sorted(runs)):
            law = next((x for x in LAWS[1:] if name.endswith(x)), LAWS[0])
            runs[name].attrs["run_index"] = index
            runs[name].attrs["scenario.capacities"] = law
            analysis = runs[name]["analysis"]
            analysis.attrs["nodf"] = analysis.attrs["nodf"] + 5 * LAWS.index(law)
            analysis.attrs["nodf_z_score"] = (analysis.attrs["nodf"] - 35.0) / 2.0
    return path


def announced(result):
    return [line for line in result.stdout.splitlines() if line.strip() and not line.startswith("figures ")]


def check_images(paths, folder, what):
    for path in paths:
        full = os.path.join(folder, path)
        size = png_size(full) if os.path.exists(full) else None
        check(size is not None, "%s: %s is not a valid PNG" % (what, path))
        if size:
            check(size[0] >= 600 and size[1] >= 500, "%s: %s is only %dx%d" % (what, path, *size))
            check(os.path.getsize(full) > 5000, "%s: %s is nearly empty" % (what, path))


def test_bare_simulation(binary, folder, base):
    result = run(binary, ["plot", base, "--out-dir", "bare"], folder)
    check(result.returncode == 0, "bare file: exit %d: %s" % (result.returncode, result.stderr))
    files = announced(result)
    check(sorted(os.path.basename(f) for f in files) ==
          ["run-000000-allocations.png", "run-000000-trajectories.png"],
          "bare file: announced %s" % files)
    check_images(files, folder, "bare file")
    check(sorted(os.listdir(os.path.join(folder, "bare"))) ==
          sorted(os.path.basename(f) for f in files), "bare file: the folder holds other files")
    for figure in ["NODF against temperature", "epsilon against temperature"]:
        check("skipped " + figure in result.stderr, "bare file: no note about skipping " + figure)


def test_sweep(binary, folder, sweep):
    result = run(binary, ["plot", sweep, "--out-dir", "sweep"], folder)
    check(result.returncode == 0, "sweep: exit %d: %s" % (result.returncode, result.stderr))
    files = announced(result)
    names = sorted(os.path.splitext(os.path.basename(f))[0] for f in files)
    expected = sorted(SWEEP_FIGURES + ["run-000000-allocations", "run-000000-trajectories"])
    check(names == expected, "sweep: announced %s, expected %s" % (names, expected))
    check_images(files, folder, "sweep")


def test_hostile_run(binary, folder, sweep):
    result = run(binary, ["plot", sweep, "--out-dir", "hostile", "--run", HOSTILE_RUN], folder)
    check(result.returncode == 0, "hostile run: exit %d: %s" % (result.returncode, result.stderr))
    files = announced(result)
    check_images(files, folder, "hostile run")
    for path in files:
        name = os.path.basename(path)
        check("'" not in name and "`" not in name and " " not in name,
              "hostile run: unsafe file name %r" % name)
    script = run(binary, ["plot", sweep, "--out-dir", "hostile-scripts", "--run", HOSTILE_RUN,
                          "--script-only"], folder)
    text = "".join(open(os.path.join(folder, p)).read() for p in announced(script))
    check(HOSTILE_RUN.replace("'", "''") in text,
          "hostile run: the run name is not a quoted literal in the scripts")
    for where in [folder, os.path.join(folder, "hostile")]:
        check(not os.path.exists(os.path.join(where, "PWNED")), "hostile run: a command ran in " + where)


def test_scripts_are_deterministic(binary, folder, sweep):
    texts = []
    for _ in range(2):
        result = run(binary, ["plot", sweep, "--out-dir", "scripts", "--script-only"], folder)
        check(result.returncode == 0, "script-only: exit %d: %s" % (result.returncode, result.stderr))
        files = announced(result)
        check(len(files) == 7 and all(f.endswith(".gp") for f in files), "script-only: announced %s" % files)
        texts.append({f: open(os.path.join(folder, f)).read() for f in files})
    check(texts[0] == texts[1], "script-only: two generations differ")
    check(not any(f.endswith(".png") for f in os.listdir(os.path.join(folder, "scripts"))),
          "script-only: an image was drawn")
    nodf = [text for path, text in texts[0].items() if os.path.basename(path) == "nodf-vs-temperature.gp"]
    check(len(nodf) == 1 and "'curveball null model: 95% band'" in nodf[0],
          "script-only: the NODF figure does not name its null model")
    # The script, run by gnuplot, draws the figure it names.
    first = sorted(texts[0])[0]
    subprocess.run(["gnuplot", first], cwd=folder, check=False)
    target = os.path.splitext(first)[0] + ".png"
    check(png_size(os.path.join(folder, target)) is not None, "script-only: %s does not draw %s" % (first, target))


def test_formats(binary, folder, sweep):
    for fmt, magic in [("svg", b"<?xml"), ("pdf", b"%PDF-")]:
        result = run(binary, ["plot", sweep, "--out-dir", fmt, "--format", fmt], folder)
        files = announced(result)
        check(result.returncode == 0 and len(files) == 7, "%s: exit %d, %s" % (fmt, result.returncode, files))
        for path in files:
            with open(os.path.join(folder, path), "rb") as f:
                check(path.endswith("." + fmt) and f.read(5) == magic, "%s: %s is not %s" % (fmt, path, fmt))


def read_or_empty(path):
    return open(path).read() if os.path.exists(path) else ""


def test_by_level(binary, folder, by):
    """One series (or panel) per capacity law; the swept key is picked and said when not named."""
    result = run(binary, ["plot", by, "--out-dir", "auto"], folder)
    lines = result.stdout.splitlines()
    check(result.returncode == 0 and lines and "drawn by scenario.capacities" in lines[0],
          "by: the other swept key is picked and said on stdout: %r" % lines[:1])
    files = announced(result)
    names = sorted(os.path.splitext(os.path.basename(f))[0] for f in files)
    check("nodf-z-vs-temperature" in names and "trend-summary" in names, "by: announced %s" % names)
    check_images(files, folder, "by")
    script = run(binary, ["plot", by, "--out-dir", "by-scripts", "--by", "scenario.capacities",
                          "--script-only"], folder)
    text = read_or_empty(os.path.join(folder, "by-scripts", "nodf-vs-temperature.gp"))
    check(all("'%s'" % law in text for law in LAWS) and "'scenario.capacities'" in text,
          "by: the NODF figure names each law in its legend")
    check("drawn by" not in script.stdout, "by: a named key is not announced")
    panels = run(binary, ["plot", by, "--out-dir", "panels", "--by", "scenario.capacities", "--panels"], folder)
    check(panels.returncode == 0, "panels: exit %d: %s" % (panels.returncode, panels.stderr))
    check_images(announced(panels), folder, "panels")
    nodf = os.path.join(folder, "panels", "nodf-vs-temperature.png")
    size = png_size(nodf) if os.path.exists(nodf) else None
    check(size is not None and size[0] > size[1] * 2, "panels: three panels side by side: %s" % (size,))
    pooled = run(binary, ["plot", by, "--out-dir", "pooled", "--by", "none", "--script-only"], folder)
    text = read_or_empty(os.path.join(folder, "pooled", "nodf-vs-temperature.gp"))
    check(pooled.returncode == 0 and "'zipf'" not in text, "--by none pools the laws")


def test_by_refusals(binary, folder, sweep, by):
    cases = [(["plot", by, "--by", "dynamics.rule"], ["dynamics.rule", "scenario.capacities"]),
             (["plot", by, "--by", "dynamics.temperature"], ["x axis", "scenario.capacities"]),
             (["plot", sweep, "--panels"], ["--panels", "nothing besides the temperature"]),
             (["plot", sweep, "--by", "scenario.capacities"], ["not a swept key"])]
    for args, words in cases:
        result = run(binary, args + ["--out-dir", "refused"], folder)
        lines = result.stderr.strip().splitlines()
        check(result.returncode == 2 and len(lines) == 1 and all(w in lines[0] for w in words),
              "refused %s: exit %d, stderr %r" % (args, result.returncode, result.stderr))
        check(not os.path.exists(os.path.join(folder, "refused")), "refused %s: a folder was made" % args)


def test_bad_input(binary, folder, base):
    cases = [(["plot", "missing.h5"], "missing.h5"),
             (["plot", base, "--format", "jpeg"], "--format"),
             (["plot", base, "--run", "no-such-run"], "no-such-run")]
    with open(os.path.join(folder, "not.h5"), "w") as f:
        f.write("text")
    cases.append((["plot", "not.h5"], "not.h5"))
    for args, word in cases:
        result = run(binary, args, folder)
        lines = result.stderr.strip().splitlines()
        check(result.returncode == 2 and len(lines) == 1 and word in lines[0],
              "bad input %s: exit %d, stderr %r" % (args, result.returncode, result.stderr))


def main():
    parser = test_parser()
    args = parser.parse_args()
    binary = os.path.abspath(args.allocsim)
    with tempfile.TemporaryDirectory() as folder:
        base = simulate(binary, folder, "bare.h5", 0.05)
        sweep = make_sweep_file(binary, folder, base)
        test_bare_simulation(binary, folder, base)
        test_sweep(binary, folder, sweep)
        test_hostile_run(binary, folder, sweep)
        test_scripts_are_deterministic(binary, folder, sweep)
        test_formats(binary, folder, sweep)
        test_bad_input(binary, folder, base)
        by = make_by_file(folder, sweep)
        test_by_level(binary, folder, by)
        test_by_refusals(binary, folder, sweep, by)
    if failures:
        sys.exit("%d check(s) failed" % len(failures))
    print("all plot checks passed")


if __name__ == "__main__":
    main()
