"""The harness of the robustness suite: each case runs allocsim in a folder
of its own and asserts the exit code, the message (what and where) and the
state of every output afterwards (absent, unchanged, or complete and
readable by h5py, the outside reference for the file format).

A case is a function registered with @case(group, title); it receives a
Ctx. Checks record failures instead of raising, so one case reports every
broken promise; an exception inside a case is a failure too.
"""
import argparse
import contextlib
import errno
import fcntl
import hashlib
import os
import shutil
import signal
import stat
import subprocess
import sys
import tempfile
import threading
import time
import traceback

import h5py
import numpy as np

CASES = []  # (group, title, function)

# Defects found by this suite and not fixed yet, each named in the closing
# note of its issue. Such a case still runs: its failure is printed as OPEN
# (not counted), and it is printed as FIXED when it passes, so that it is
# taken off this list.
KNOWN_OPEN = set()


def case(group, title):
    def register(function):
        CASES.append((group, title, function))
        return function
    return register


class Skip(Exception):
    """A case that cannot run here (e.g. no tmpfs); its reason is printed."""


def default_signals():
    """A child starts with SIGINT and SIGTERM at their defaults, even when the
    suite runs where they are ignored (a background job of a shell)."""
    signal.signal(signal.SIGINT, signal.SIG_DFL)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)


class Result:
    def __init__(self, code, out, err, args):
        self.code, self.out, self.err, self.args = code, out, err, args

    def __repr__(self):
        return f"exit {self.code}, stderr {self.err.strip()[-400:]!r}"


def file_kind(path):
    try:
        mode = os.lstat(path).st_mode
    except FileNotFoundError:
        return "absent"
    for test, name in ((stat.S_ISLNK, "symlink"), (stat.S_ISREG, "file"), (stat.S_ISDIR, "dir"),
                       (stat.S_ISFIFO, "fifo"), (stat.S_ISCHR, "chardev"), (stat.S_ISBLK, "blockdev")):
        if test(mode):
            return name
    return "other"


def digest(path):
    h = hashlib.sha256()
    with open(path, "rb") as f:
        for block in iter(lambda: f.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def tree_state(path):
    """What is at `path`: kind, and the content digest of files (recursively for folders)."""
    kind = file_kind(path)
    if kind == "file":
        return (kind, digest(path), stat.S_IMODE(os.stat(path).st_mode))
    if kind == "symlink":
        return (kind, os.readlink(path))
    if kind == "dir":
        # Temporaries of killed writers may be cleaned; what was complete must stay.
        return (kind, tuple((name, tree_state(os.path.join(path, name)))
                            for name in sorted(os.listdir(path)) if ".tmp-" not in name))
    return (kind,)


class FifoReader:
    """Reads a FIFO in the background (opened non-blocking first, so a writer never waits)."""

    def __init__(self, path):
        self.fd = os.open(path, os.O_RDONLY | os.O_NONBLOCK)
        self.data = bytearray()
        self.stop = False
        self.thread = threading.Thread(target=self._read, daemon=True)
        self.thread.start()

    def _read(self):
        while True:
            try:
                chunk = os.read(self.fd, 65536)
            except BlockingIOError:
                chunk = None
            if chunk:
                self.data += chunk
                continue
            if self.stop:
                return
            time.sleep(0.005)

    def close(self):
        self.stop = True
        self.thread.join(5)
        os.close(self.fd)
        return bytes(self.data)


class Ctx:
    def __init__(self, args, title, root):
        self.binary = args.allocsim
        self.data = args.data
        self.title = title
        self.dir = tempfile.mkdtemp(prefix="case-", dir=root)
        self.failures = []
        self.snapshots = {}
        self.mounts = []
        self.processes = []

    # --- files -------------------------------------------------------------
    def path(self, name):
        return name if os.path.isabs(name) else os.path.join(self.dir, name)

    def write(self, name, text, mode="w"):
        path = self.path(name)
        os.makedirs(os.path.dirname(path), exist_ok=True)
        with open(path, mode) as f:
            f.write(text)
        return path

    def exists(self, name):
        return file_kind(self.path(name)) != "absent"

    def fifo(self, name):
        path = self.path(name)
        os.mkfifo(path)
        return path

    def null_device(self, name):
        """A character device like /dev/null (major 1, minor 3), made here, never the system's."""
        path = self.path(name)
        os.mknod(path, 0o666 | stat.S_IFCHR, os.makedev(1, 3))
        return path

    def tmpfs(self, name, size_kib):
        """A small tmpfs mounted at `name`; Skip where mounting is not allowed."""
        path = self.path(name)
        os.makedirs(path, exist_ok=True)
        result = subprocess.run(["mount", "-t", "tmpfs", "-o", f"size={size_kib}k", "tmpfs", path],
                                capture_output=True, text=True)
        if result.returncode != 0:
            raise Skip(f"cannot mount a tmpfs ({result.stderr.strip() or 'mount failed'})")
        self.mounts.append(path)
        return path

    def fill(self, folder, leave_kib):
        """Fills the file system of `folder` until about `leave_kib` KiB are free."""
        st = os.statvfs(folder)
        free = st.f_bavail * st.f_frsize
        size = max(0, free - leave_kib * 1024)
        with open(os.path.join(folder, "filler"), "wb") as f:
            block = b"\0" * (1 << 16)
            while size > 0:
                n = min(size, len(block))
                try:
                    f.write(block[:n])
                except OSError:
                    break
                size -= n
        return os.path.join(folder, "filler")

    def cleanup(self):
        for p in self.processes:
            if p.poll() is None:
                p.kill()
                p.wait()
        for path in reversed(self.mounts):
            subprocess.run(["umount", "-l", path], capture_output=True)
        shutil.rmtree(self.dir, ignore_errors=True)

    # --- running ------------------------------------------------------------
    def allocsim(self, *args, timeout=120, env=None, cwd=None):
        full_env = dict(os.environ)
        full_env.update(env or {})
        try:
            p = subprocess.run([self.binary, *map(str, args)], cwd=cwd or self.dir,
                               capture_output=True, text=True, timeout=timeout, env=full_env,
                               stdin=subprocess.DEVNULL, preexec_fn=default_signals)
            return Result(p.returncode, p.stdout, p.stderr, args)
        except subprocess.TimeoutExpired as e:
            out = e.stdout.decode() if isinstance(e.stdout, bytes) else (e.stdout or "")
            err = e.stderr.decode() if isinstance(e.stderr, bytes) else (e.stderr or "")
            return Result("timeout", out, err, args)

    def start(self, *args, env=None):
        full_env = dict(os.environ)
        full_env.update(env or {})
        p = subprocess.Popen([self.binary, *map(str, args)], cwd=self.dir,
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                             env=full_env, stdin=subprocess.DEVNULL, preexec_fn=default_signals)
        self.processes.append(p)
        return p

    def wait_for(self, condition, timeout=60, process=None):
        end = time.time() + timeout
        while time.time() < end:
            if condition():
                return True
            if process is not None and process.poll() is not None:
                return condition()
            time.sleep(0.002)
        return False

    # --- checks -------------------------------------------------------------
    def check(self, condition, message):
        if not condition:
            self.failures.append(message)
        return condition

    def expect(self, r, code, says=(), one_line=True):
        """Exit code; every string of `says` in stderr (case-insensitive); an
        error is one line, without HDF5's own diagnostics or a crash."""
        ok = self.check(r.code == code, f"expected exit {code}, got {r!r} for {list(r.args)}")
        text = (r.err + r.out).lower()
        for s in says:
            ok &= self.check(s.lower() in text, f"message lacks {s!r}: {r.err.strip()[-500:]!r}")
        ok &= self.check("hdf5-diag" not in text and "terminate called" not in text
                         and "segmentation" not in text, f"diagnostics or crash in stderr: {r.err[-300:]!r}")
        if one_line and code not in (0, "timeout"):
            errors = [line for line in r.err.splitlines() if ": error:" in line]
            ok &= self.check(len(errors) == 1, f"expected one error line, got {len(errors)}: {r.err[-400:]!r}")
        return ok

    def snapshot(self, *names):
        for name in names:
            self.snapshots[name] = tree_state(self.path(name))

    def unchanged(self, *names):
        for name in names:
            before = self.snapshots.get(name)
            self.check(before is not None and tree_state(self.path(name)) == before,
                       f"{name} changed (now {file_kind(self.path(name))})")

    def absent(self, *names):
        for name in names:
            self.check(file_kind(self.path(name)) == "absent", f"{name} exists ({file_kind(self.path(name))})")

    def kind(self, name, expected):
        got = file_kind(self.path(name))
        self.check(got == expected, f"{name} is a {got}, expected a {expected}")

    def no_leftovers(self, folder="."):
        """No temporary file, lock or parts folder is left in `folder`."""
        base = self.path(folder)
        for name in os.listdir(base):
            self.check(".tmp-" not in name and not name.endswith(".parts") and not name.endswith(".lock"),
                       f"left behind: {os.path.join(folder, name)}")

    def results(self, name, runs=None, check=None):
        """A complete results file: h5py opens it; format attribute; every run
        complete; /summary has one row per run; `check(f)` for more."""
        path = self.path(name)
        try:
            with h5py.File(path, "r") as f:
                ok = self.check(f.attrs.get("format") == "allocsim-results", f"{name}: format attribute")
                names = sorted(f["runs"]) if "runs" in f else []
                if runs is not None:
                    ok &= self.check(len(names) == runs, f"{name}: {len(names)} runs, expected {runs}")
                for run in names:
                    ok &= self.check(f["runs"][run].attrs.get("status") == "complete",
                                     f"{name}: {run} not complete")
                    total = f["runs"][run]["allocation/total"][()]
                    ok &= self.check(np.all(np.isfinite(total)), f"{name}: {run} total not finite")
                if "summary" in f:
                    for column in f["summary"]:
                        ok &= self.check(len(f["summary"][column]) == len(names),
                                         f"{name}: summary/{column} has {len(f['summary'][column])} rows")
                elif runs is not None and runs > 1:
                    ok &= self.check(False, f"{name}: no /summary")
                if check:
                    ok &= bool(check(f))
                return ok
        except Exception as e:  # noqa: BLE001 - any failure to read is the finding
            return self.check(False, f"{name}: not readable by h5py ({e})")

    def csv_rows(self, name, min_rows=1):
        path = self.path(name)
        try:
            with open(path) as f:
                lines = [line for line in f.read().splitlines() if line.strip()]
        except OSError as e:
            self.check(False, f"{name}: cannot be read ({e})")
            return []
        self.check(len(lines) >= min_rows, f"{name}: {len(lines)} lines")
        widths = {len(line.split(",")) for line in lines}
        self.check(len(widths) == 1, f"{name}: ragged CSV (widths {sorted(widths)})")
        return lines


# --- shared inputs -----------------------------------------------------------

SWEEP = """# a tiny temperature sweep
[scenario]
agents = 6
partners = 5
gains = random
[dynamics]
rule = price
rounds = {rounds}
units = {units}
burn_in = 10
window = 10
[sweep]
dynamics.temperature = 0.05, 0.1, 0.2
replicates = 2
[output]
file = {output}
"""


def sweep_text(output="out.h5", rounds=40, units=600, extra=""):
    return SWEEP.format(output=output, rounds=rounds, units=units) + extra


# A slower sweep (8 runs of some tens of milliseconds) for interrupting midway.
SLOW = """[scenario]
agents = 20
partners = 15
gains = random
[dynamics]
rule = price
rounds = {rounds}
units = 10000
burn_in = 50
window = 50
[sweep]
dynamics.temperature = 0.05, 0.1, 0.2, 0.4
replicates = 2
[output]
file = {output}
"""


def slow_text(output="out.h5", rounds=1200, extra=""):
    return SLOW.format(output=output, rounds=rounds) + extra


def write_problem(ctx, prefix="", gains=None, budgets=None, capacities=None):
    gains = gains if gains is not None else "1,2,3\n4,5,6\n"
    budgets = budgets if budgets is not None else "0.5\n0.5\n"
    capacities = capacities if capacities is not None else "0.25\n0.25\n0.5\n"
    return (ctx.write(prefix + "gains.csv", gains), ctx.write(prefix + "budgets.csv", budgets),
            ctx.write(prefix + "capacities.csv", capacities))


def interrupt_sweep(ctx, ini, *extra, parts_wanted=1, sig=signal.SIGKILL, tries=4):
    """Starts `allocsim run ini` and kills it once `parts_wanted` runs are kept;
    returns True when the sweep was left unfinished."""
    out = None
    with open(ctx.path(ini)) as f:
        for line in f:
            if line.strip().startswith("file"):
                out = line.split("=", 1)[1].strip()
    parts = ctx.path(out + ".parts")

    def kept():
        try:
            return len([n for n in os.listdir(parts) if n.startswith("run-") and n.endswith(".h5")])
        except FileNotFoundError:
            return 0

    for _ in range(tries):
        p = ctx.start("run", ini, "--threads", "1", "--quiet", *extra)
        ctx.wait_for(lambda: kept() >= parts_wanted, timeout=60, process=p)
        if p.poll() is None:
            p.send_signal(sig)
        p.communicate()
        if not ctx.exists(out) and kept() >= parts_wanted:
            return True
        shutil.rmtree(parts, ignore_errors=True)
        with contextlib.suppress(FileNotFoundError):
            os.remove(ctx.path(out))
    ctx.check(False, "could not interrupt the sweep midway")
    return False


def dead_pid():
    """A process id that is not running now."""
    p = subprocess.Popen(["true"])
    p.wait()
    return p.pid


# --- the driver -------------------------------------------------------------

def main(modules):
    parser = argparse.ArgumentParser()
    parser.add_argument("--allocsim", required=True)
    parser.add_argument("--data", required=True)
    parser.add_argument("--group", action="append", help="run only these groups")
    parser.add_argument("--match", help="run only cases whose title contains this")
    parser.add_argument("--list", action="store_true")
    parser.add_argument("--keep", action="store_true", help="keep the folders of failed cases")
    args = parser.parse_args()
    args.allocsim = os.path.abspath(args.allocsim)
    selected = [c for c in CASES if (not args.group or c[0] in args.group)
                and (not args.match or args.match in c[1])]
    if args.list:
        for group, title, _ in selected:
            print(f"{group}: {title}")
        print(f"{len(selected)} cases")
        return 0
    root = tempfile.mkdtemp(prefix="allocsim-robustness-")
    failed, skipped, opened = [], [], []
    started = time.time()
    for group, title, function in selected:
        ctx = Ctx(args, title, root)
        t0 = time.time()
        try:
            function(ctx)
        except Skip as s:
            skipped.append(title)
            print(f"SKIP {group}: {title}: {s}")
            ctx.cleanup()
            continue
        except Exception:  # noqa: BLE001
            ctx.failures.append("exception: " + traceback.format_exc().strip().splitlines()[-1])
        if ctx.failures and title in KNOWN_OPEN:
            opened.append(title)
            print(f"OPEN {group}: {title} ({time.time() - t0:.1f} s)")
            for message in ctx.failures:
                print(f"     {message}")
        elif ctx.failures:
            failed.append(title)
            print(f"FAIL {group}: {title} ({time.time() - t0:.1f} s)")
            for message in ctx.failures:
                print(f"     {message}")
            if args.keep:
                print(f"     kept {ctx.dir}")
        elif title in KNOWN_OPEN:
            print(f"FIXED {group}: {title}: take it off KNOWN_OPEN ({time.time() - t0:.1f} s)")
        else:
            print(f"ok   {group}: {title} ({time.time() - t0:.1f} s)")
        if not (args.keep and ctx.failures):
            ctx.cleanup()
    shutil.rmtree(root, ignore_errors=True)
    ran = len(selected) - len(skipped)
    print(f"\n{ran} cases run, {len(failed)} failed, {len(opened)} known open defects, "
          f"{len(skipped)} skipped, {time.time() - started:.1f} s")
    return 1 if failed else 0
