"""allocsim from Python: exact and entropic transport, the temperature
estimator, the analysis of an allocation, structure metrics and null models
on numpy arrays (or pandas DataFrames), with the C++ library's speed.

Every function takes arrays in any dtype and memory order numpy can convert,
and keyword options with the library's defaults (see help() of each).
Unusable input raises ValueError naming the argument; a problem without
solution is a status in the result, not an exception. Long calls release
the GIL, so Python threads run them in parallel. Results are dicts with
attribute access whose keys are the command line's JSON names.
"""

import inspect as _inspect

from . import _core
from ._core import __version__
from ._labels import align as _align
from ._result import Result, as_result as _as_result

__all__ = ["Result", "__version__"]


def _signature(name):
    arrays, array_defaults, options = _core._signatures[name]
    first_default = len(arrays) - len(array_defaults)
    parameters = []
    for k, array in enumerate(arrays):
        default = _inspect.Parameter.empty if k < first_default else None
        parameters.append(_inspect.Parameter(
            array, _inspect.Parameter.POSITIONAL_OR_KEYWORD, default=default))
    for option, default in options:
        parameters.append(_inspect.Parameter(option, _inspect.Parameter.KEYWORD_ONLY,
                                             default=default))
    return _inspect.Signature(parameters)


def _export(name, matrices=(), row_vectors=(), column_vectors=(), wrap=True):
    """allocsim.<name>: the extension's function with its signature, its
    docstring, labelled inputs aligned, and the result as a Result."""
    core = getattr(_core, name)
    signature = _signature(name)
    array_names = list(_core._signatures[name][0])
    labelled = bool(matrices or row_vectors or column_vectors)

    def function(*args, **kwargs):
        agents = partners = None
        if labelled and (any(hasattr(a, "index") for a in args)
                         or any(hasattr(kwargs.get(n), "index") for n in array_names)):
            bound = dict(zip(array_names, args))
            for n in array_names:
                if n in kwargs:
                    bound[n] = kwargs.pop(n)
            agents, partners = _align(bound, matrices, row_vectors, column_vectors)
            args = tuple(bound.get(n) for n in array_names if n in bound)
        result = core(*args, **kwargs)
        if agents is not None and isinstance(result, dict):
            result["agent_labels"], result["partner_labels"] = agents, partners
        return _as_result(result) if wrap else result

    function.__name__ = function.__qualname__ = name
    function.__module__ = __name__
    function.__doc__ = core.__doc__
    function.__signature__ = signature
    globals()[name] = function
    __all__.append(name)


_export("solve_exact", ("gains", "access"), ("budgets",), ("capacities",))
_export("solve_entropic", ("gains", "access"), ("budgets",), ("capacities",))
_export("estimate_temperature", ("allocation", "gains", "access"))
_export("analyze", ("allocation", "gains", "access"), wrap=False)
_export("fit_gains", ("allocation", "access"))
_export("fit_latent_association", ("allocation", "access"))
for _name in ("nodf", "wnodf", "fitness_complexity", "eci", "gradient_order",
              "curveball", "bicm", "fixed_margins"):
    _export(_name, ("matrix",))
for _name in ("binarize", "connectance", "spectral_radius"):
    _export(_name, ("matrix",), wrap=False)
del _name


def read_results(path):
    """Reads a results file (HDF5, written by `allocsim run`, `simulate`,
    `synth` or `analyze --save`).

    Returns a Result: path, attributes (the file's: format, tool_version,
    experiment text, ...), runs (the run names, sorted) and summary, one row
    per run and one column per swept key and scalar metric: a
    pandas.DataFrame when pandas is installed, otherwise a dict of numpy
    arrays (text columns as lists of str). A file that is missing or not a
    results file raises ValueError naming it. One run's arrays: read_run.
    """
    import os
    fields = _core._read_results(os.fspath(path))
    try:
        import pandas
    except ImportError:
        pandas = None
    if pandas is not None:
        summary = fields["summary"]
        first = [name for name in ("run",) if name in summary]
        fields["summary"] = pandas.DataFrame({name: summary[name] for name in
                                              first + [n for n in summary if n not in first]})
    return Result(fields)


def read_run(path, run=None):
    """Reads one run of a results file (run=None: the only run).

    Returns a Result: run, parameters (every effective run parameter, the
    seed, status), gains (n x m), budgets (n), capacities (m), access (n x m
    uint8, or None when every pair is allowed), snapshots (k x n x m, units
    per window), round_end (k, the last round of each window), total (n x m,
    units after burn-in), prices (k x m, or None for rules without prices),
    agent_labels and partner_labels (field matrices; None when absent) and
    analysis (the attributes `allocsim analyze --write` stored).
    """
    import os
    return Result(_core._read_run(os.fspath(path), run))


__all__ += ["read_results", "read_run"]


def _key_text(value):
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (list, tuple)):
        return ", ".join(_key_text(v) for v in value)
    return repr(value) if isinstance(value, float) else str(value)


def _experiment_keys(experiment):
    keys = []
    for name, value in experiment.items():
        if isinstance(value, dict):  # {"scenario": {"agents": 20}}
            keys += [(f"{name}.{key}", _key_text(v)) for key, v in value.items()]
        else:  # {"scenario.agents": 20}
            keys.append((str(name), _key_text(value)))
    return keys


def simulate(experiment, *, threads=1):
    """Plays one run of an experiment, as `allocsim simulate` does.

    experiment: INI text (the contents of an experiment file), a dict of
    experiment keys ({"scenario.agents": 20, "dynamics.temperature": 0.05}
    or {"scenario": {"agents": 20}}, values as numbers, words, True/False
    or lists), or a pathlib.Path to an experiment file. Keys left out take
    their defaults (`allocsim run --list-keys`). threads: worker threads
    (results do not depend on it).

    Returns a Result with the run's arrays, bit-identical to the results
    file `allocsim simulate` writes for the same keys: gains, budgets,
    capacities, access (or None), snapshots (k x n x m, units per window),
    round_end, total (units after burn-in), prices (k x m, or None), plus
    parameters (every effective key, the seed), rounds, unplaced_units,
    seconds, infeasibility (why no coupling meets the margins, or "").
    An unknown key or a bad value raises ValueError naming it. Releases the GIL.
    """
    import os
    import tempfile
    with tempfile.TemporaryDirectory(prefix="allocsim-") as folder:
        ini_path, keys = "", []
        if isinstance(experiment, dict):
            keys = _experiment_keys(experiment)
        elif isinstance(experiment, str):
            ini_path = os.path.join(folder, "experiment.ini")
            with open(ini_path, "w") as out:
                out.write(experiment)
        elif isinstance(experiment, os.PathLike):
            ini_path = os.fspath(experiment)
        else:
            raise TypeError("experiment: must be INI text, a dict of experiment keys or a path")
        output = os.path.join(folder, "run.h5")
        name = "experiment" if isinstance(experiment, str) else ini_path
        summary = _core._simulate(ini_path, name, keys, output, threads)
        run = _core._read_run(output, None)
    run.update(summary)
    return Result(run)


__all__ += ["simulate"]
