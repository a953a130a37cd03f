"""The Python module against the command line it must agree with.

Run by ./tools/test (ctest `python_module`) with PYTHONPATH at build/python,
RXTRAIN_BIN the rxtrain binary and RXTRAIN_SOURCE_DIR the repository.
"""

import glob
import json
import os
import re
import shutil
import subprocess
import sys
import tempfile

import numpy
import pytest
from conftest import BIN, SOURCE, same

import rxtrain

DEMOS = sorted(glob.glob(os.path.join(SOURCE, "cases", "*.yaml")))


@pytest.mark.parametrize("path", DEMOS, ids=os.path.basename)
def test_run_to_dict_equals_the_cli_json(path):
    with tempfile.TemporaryDirectory() as d:
        out = os.path.join(d, "r.json")
        subprocess.run([BIN, "run", path, "--json", out], check=True, capture_output=True)
        with open(out) as f:
            cli = json.load(f)
    same(rxtrain.load_case(path).run().to_dict(), cli)


def test_stages_carry_numpy_profiles_and_the_outlet_conversion():
    r = rxtrain.load_case(os.path.join(SOURCE, "cases", "so2-three-bed-converter.yaml")).run()
    assert [s["id"] for s in r.stages] == ["B1", "C1", "B2", "C2", "B3"]
    b1 = r.stages[0]
    assert isinstance(b1["T"], numpy.ndarray) and b1["T"].shape == b1["X"].shape
    assert b1["T"][-1] == pytest.approx(b1["T_out"])
    assert r.conversion == pytest.approx(r.to_dict()["conversion"], rel=0, abs=0)
    frame = rxtrain.stages_frame(r)
    assert list(frame["id"]) == ["B1", "C1", "B2", "C2", "B3"]


def test_run_options_take_units_and_reject_bad_values():
    c = rxtrain.load_case(os.path.join(SOURCE, "cases", "so2-oxidation-staging.yaml"))
    assert c.run(limit_margin="10 K").to_dict()["stages"][0]["limit"]["margin"] == 10.0
    with pytest.raises(rxtrain.InputError) as e:
        c.run(rtol=-1.0)
    assert e.value.file == "rtol"
    with pytest.raises(rxtrain.InputError):
        c.run(limit_margin="3 bar")


def test_with_values_equals_the_case_edited_by_hand():
    path = os.path.join(SOURCE, "cases", "isomerization-two-bed.yaml")
    c = rxtrain.load_case(path)
    hotter = c.with_values({"feed.T": "160 degC"})
    text = open(path).read()
    edited = re.sub(r"T:\s*150\s*degC", "T: 160 degC", text, count=1)
    assert edited != text
    by_hand = rxtrain.load_case_text(edited, "edited.yaml")
    same(hotter.run().to_dict()["stages"], by_hand.run().to_dict()["stages"])
    assert c.run().conversion != hotter.run().conversion  # the copy, not the original, changed
    with pytest.raises(rxtrain.InputError) as e:
        c.with_values({"feed.Tx": 400.0})
    assert "feed.T" in e.value.message  # the nearest valid path is named


def test_input_errors_carry_the_line_and_column_the_cli_prints():
    checked = 0
    for path in sorted(glob.glob(os.path.join(SOURCE, "tests", "bad_cases", "*.yaml"))):
        cli = subprocess.run([BIN, "check", path], capture_output=True, text=True)
        m = re.search(r":(\d+):(\d+): error: ", cli.stderr)
        if cli.returncode != 2 or not m:
            continue
        with pytest.raises(rxtrain.InputError) as e:
            rxtrain.load_case(path)
        assert (e.value.line, e.value.column) == (int(m.group(1)), int(m.group(2))), path
        assert e.value.file == path
        assert e.value.message in cli.stderr
        checked += 1
    assert checked >= 20


def test_an_unreachable_target_is_an_infeasible_error_with_the_reach():
    # One adiabatic SO2 bed reaches X = 0.7031 at most (its adiabatic
    # equilibrium); a target of 0.9 is out of reach, located at the stage.
    path = os.path.join(SOURCE, "cases", "so2-oxidation-staging.yaml")
    text = open(path).read()
    unreachable = text.replace("catalyst: 30000 kg,", "target: {conversion: 0.9},", 1)
    assert unreachable != text
    c = rxtrain.load_case_text(unreachable, "unreachable.yaml")
    with pytest.raises(rxtrain.InfeasibleError) as e:
        c.run()
    assert isinstance(e.value, rxtrain.SolverError)
    assert e.value.file == "unreachable.yaml" and e.value.line == 70
    assert "the most this stage can reach is X = 0.7031" in e.value.message
    # ... and as a number a script can go on from (the message rounds it).
    assert e.value.best_quantity == "conversion"
    assert round(e.value.best, 4) == 0.7031


def test_no_input_crashes_the_loader():
    """Every fuzzing seed and regression input of the case loader, through
    the module: a Case or an InputError, never anything else."""
    inputs = sorted(glob.glob(os.path.join(SOURCE, "tests", "fuzz", "corpus", "case_loader", "*")))
    assert len(inputs) > 30
    for path in inputs:
        with open(path, "rb") as f:
            text = f.read().decode("utf-8", errors="replace")
        try:
            rxtrain.load_case_text(text, "fuzz.yaml")
        except rxtrain.InputError:
            pass


def test_the_worked_example_in_docs_python_md_runs():
    doc = open(os.path.join(SOURCE, "docs", "python.md")).read()
    blocks = re.findall(r"```python\n(.*?)```", doc, flags=re.S)
    assert blocks
    cwd = os.getcwd()
    try:
        os.chdir(SOURCE)
        scope = {}
        for block in blocks:
            exec(compile(block, "docs/python.md", "exec"), scope)  # noqa: S102
    finally:
        os.chdir(cwd)


def test_a_fuzz_of_the_loader_and_runs_raises_only_the_modules_errors(tmp_path):
    """The case loader's fuzzing corpus and random mutations of it, loaded
    and (where they load) run through the module, in a child interpreter so
    that a crash is a failure that leaves its input behind. 30 s by
    default (RXTRAIN_PY_FUZZ_SECONDS)."""
    seconds = os.environ.get("RXTRAIN_PY_FUZZ_SECONDS", "30")
    seed = os.environ.get("RXTRAIN_PY_FUZZ_SEED", "22")
    last = tmp_path / "last-input.yaml"
    corpus = os.path.join(SOURCE, "tests", "fuzz", "corpus", "case_loader")
    child = subprocess.run(
        [sys.executable, os.path.join(os.path.dirname(__file__), "fuzz_load.py"), corpus,
         seconds, seed, str(last)], capture_output=True, text=True, timeout=float(seconds) + 120)
    kept = os.path.join(tempfile.gettempdir(), "rxtrain-fuzz-finding.yaml")
    if child.returncode != 0:
        shutil.copy(last, kept)
    assert child.returncode == 0, f"seed {seed}; input kept in {kept}\n{child.stderr[-3000:]}"
    assert re.fullmatch(r"\d+ inputs, \d+ loaded, \d+ ran\n", child.stdout), child.stdout
