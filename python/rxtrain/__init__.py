"""rxtrain: screening and study of trains of catalytic reactors, from Python.

Results are for screening and study only. Adiabatic stages can run away; every
design must be confirmed by licensed engineers under the codes that apply.

    import rxtrain
    case = rxtrain.load_case("cases/isomerization-two-bed.yaml")
    result = case.run()
    result.conversion            # overall conversion of the key species
    result.to_dict()             # what `rxtrain run --json` writes (SI units)
    hotter = case.with_values({"feed.T": "160 degC"})

Errors are exceptions: rxtrain.InputError (with file, line, column, message),
rxtrain.SolverError and rxtrain.InfeasibleError (a SolverError, located).
"""

from ._rxtrain import (  # noqa: F401  (the public names)
    CAUTION,
    Case,
    InfeasibleError,
    InputError,
    Result,
    SolverError,
    __version__,
    load_case,
    load_case_text,
)

__all__ = [
    "CAUTION",
    "Case",
    "InfeasibleError",
    "InputError",
    "Result",
    "SolverError",
    "load_case",
    "load_case_text",
    "stages_frame",
]


def stages_frame(result):
    """The stages of a result as a pandas DataFrame (one row per stage, SI
    units), or as a dict of columns when pandas is not installed."""
    rows = result.stages
    columns = ["id", "type", "volume", "catalyst_mass", "T_in", "T_out", "T_peak",
               "conversion", "duty"]
    table = {c: [r[c] for r in rows] for c in columns}
    try:
        import pandas
    except ImportError:
        return table
    return pandas.DataFrame(table)
