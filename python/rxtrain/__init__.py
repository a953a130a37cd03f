"""rxtrain: screening and study of trains of catalytic reactors, from Python.

Results are for screening and study only. Adiabatic stages can run away; every
design must be confirmed by licensed engineers under the codes that apply.

    import rxtrain
    case = rxtrain.load_case("cases/isomerization-two-bed.yaml")
    result = case.run()
    result.conversion            # overall conversion of the key species
    result.to_dict()             # what `rxtrain run --json` writes (SI units)
    hotter = case.with_values({"feed.T": "160 degC"})
    study = case.sweep(vary={"feed.T": ("140 degC", "170 degC", 7)})
    study.columns                # a dict of numpy columns; study.to_dataframe()

Errors are exceptions: rxtrain.InputError (with file, line, column, message),
rxtrain.SolverError and rxtrain.InfeasibleError (a SolverError, located, with
`best`: the most the stage can reach). See docs/python.md.
"""

from ._rxtrain import (  # noqa: F401  (the public names)
    CAUTION,
    Case,
    CompareResult,
    DesignResult,
    InfeasibleError,
    InputError,
    Result,
    SolverError,
    StagingResult,
    SweepResult,
    __version__,
    load_case,
    load_case_text,
)

__all__ = [
    "CAUTION",
    "Case",
    "CompareResult",
    "DesignResult",
    "InfeasibleError",
    "InputError",
    "Result",
    "SolverError",
    "StagingResult",
    "SweepResult",
    "load_case",
    "load_case_text",
    "stages_frame",
]


def _pandas():
    """pandas when it can be imported, else None (it is optional)."""
    try:
        import pandas
    except ImportError:
        return None
    return pandas


def stages_frame(result):
    """The stages of a result as a pandas DataFrame (one row per stage, SI
    units), or as a dict of columns when pandas is not installed."""
    rows = result.stages
    columns = ["id", "type", "volume", "catalyst_mass", "T_in", "T_out", "T_peak",
               "conversion", "duty"]
    table = {c: [r[c] for r in rows] for c in columns}
    pandas = _pandas()
    return table if pandas is None else pandas.DataFrame(table)


def _input_error(argument, message):
    """An InputError raised here, with the attributes the library's carry
    (the argument stands for the file, as for the library's argument errors)."""
    e = InputError(f"{argument}: error: {message}")
    e.file, e.line, e.column, e.message = argument, 0, 0, message
    return e


def _axis(path, spec):
    """One --vary axis: "START:STOP:N" (or "log:START:STOP:N") as text, or
    a tuple (start, stop, n) whose ends are numbers (SI) or text with units."""
    if isinstance(spec, str):
        return f"{path}={spec}"
    parts = list(spec)
    log = bool(parts) and parts[0] == "log"
    if log:
        parts = parts[1:]
    if len(parts) != 3:
        raise _input_error("vary", f"{path}: give (start, stop, n), got {spec!r}")
    start, stop, n = parts
    text = ":".join(repr(v) if isinstance(v, float) else str(v) for v in (start, stop, n))
    return f"{path}={'log:' if log else ''}{text}"


def _specs(given, make):
    """A list of "PATH=..." strings from a list of them or a dict."""
    if given is None:
        return []
    if isinstance(given, str):
        return [given]
    if isinstance(given, dict):
        return [make(path, spec) for path, spec in given.items()]
    return list(given)


def _sweep(self, vary=None, sample=None, runs=0, seed=None, outputs=None, jobs=0,
           shard="1/1", rtol=None, limit_margin=5.0, progress=None):
    """A grid or Monte Carlo study of the case, as `rxtrain sweep`.

    vary:   {"feed.T": ("120 degC", "200 degC", 41)} or {"feed.T": "120degC:200degC:41"}
            or ["feed.T=120degC:200degC:41"]: a full grid, the last axis fastest;
            ("log", start, stop, n) for a logarithmic axis.
    sample: {"feed.T": "normal(130 degC, 3 K)"} or ["feed.T=normal(...)"], with
            runs=N (and seed=, default 1): Monte Carlo.
    outputs: columns, a list or a comma-separated string (default: the CLI's).
    jobs:   worker threads, the CLI's pool (0: every core); the rows are the
            same for any number.
    shard:  "K/N", a slice of the runs, as --shard.
    rtol, limit_margin: as for run() (default: the CLI's).
    progress: called with (done, total) about ten times a second; an
            exception from it stops the sweep, as Ctrl-C does.
    """
    vary = _specs(vary, _axis)
    sample = _specs(sample, lambda path, spec: f"{path}={spec}")
    if isinstance(outputs, (list, tuple)):
        outputs = ",".join(outputs)
    return self._sweep(vary, sample, int(runs or 0), seed, outputs, int(jobs), str(shard),
                       None if rtol is None else float(rtol), limit_margin, progress)


def _to_dataframe(self):
    """The rows as a pandas DataFrame (ImportError without pandas; the
    columns are a dict of numpy arrays either way: .columns)."""
    pandas = _pandas()
    if pandas is None:
        raise ImportError("to_dataframe needs pandas (Debian: python3-pandas); "
                          "SweepResult.columns holds the same columns as numpy arrays")
    return pandas.DataFrame(self.columns)


def _table(self):
    """The rows as a DataFrame when pandas is installed, else the dict of
    numpy columns."""
    return self.columns if _pandas() is None else self.to_dataframe()


Case.sweep = _sweep
SweepResult.to_dataframe = _to_dataframe
SweepResult.table = _table
