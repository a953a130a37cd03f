"""staging, compare, optimize and sweep through the module, against the
command line (the same core calls and writers must give the same answer)."""

import builtins
import os
import signal
import threading
import time

import numpy
import pytest
from conftest import SOURCE, cli, same

import rxtrain

STAGING = os.path.join(SOURCE, "cases", "so2-oxidation-staging.yaml")
OPTIMIZE = os.path.join(SOURCE, "cases", "three-bed-optimize.yaml")
THREE_BED = os.path.join(SOURCE, "cases", "so2-three-bed-converter.yaml")
TANKS = os.path.join(SOURCE, "cases", "liquid-tank-then-tube.yaml")


def cli_json(tmp_path, *args):
    out = tmp_path / "out.json"
    cli(*args, "--json", str(out))
    import json

    return json.loads(out.read_text())


@pytest.mark.parametrize("path", [STAGING, OPTIMIZE], ids=os.path.basename)
def test_staging_equals_the_cli(tmp_path, path):
    s = rxtrain.load_case(path).staging(approach=0.85, return_to="max-rate")
    same(s.to_dict(), cli_json(tmp_path, "staging", path, "--approach", "0.85",
                               "--return-to", "max-rate"))
    assert s.text() == cli("staging", path, "--approach", "0.85", "--return-to",
                           "max-rate").stdout
    d = s.to_dict()
    assert s.target_reached == d["target_reached"] and s.beds_needed == d["beds_needed"]
    beds = [st for st in s.staged_run.stages if st["type"] == "pfr"]
    assert len(beds) == len(d["beds"])
    assert beds[-1]["X"][-1] == pytest.approx(s.staged_conversion, rel=1e-9)


def test_staging_refuses_bad_options_as_input_errors():
    c = rxtrain.load_case(STAGING)
    with pytest.raises(rxtrain.InputError) as e:
        c.staging(approach=1.5)
    assert "approach" in e.value.message
    with pytest.raises(rxtrain.InputError) as e:
        c.staging(return_to="sideways")
    assert e.value.file == "return_to"
    with pytest.raises(rxtrain.InputError) as e:  # no train-level target: located at the file
        rxtrain.load_case(THREE_BED).staging()
    assert e.value.file == THREE_BED and "no train-level target" in e.value.message


@pytest.mark.parametrize("path", [THREE_BED, TANKS, OPTIMIZE], ids=os.path.basename)
def test_compare_equals_the_cli(tmp_path, path):
    r = rxtrain.load_case(path).compare(limit_margin="10 K")
    same(r.to_dict(), cli_json(tmp_path, "compare", path, "--limit-margin", "10K"))
    assert r.text() == cli("compare", path, "--limit-margin", "10K").stdout


def test_optimize_equals_the_cli(tmp_path):
    d = rxtrain.load_case(OPTIMIZE).optimize(max_beds=3, margin="5 K")
    same(d.to_dict(), cli_json(tmp_path, "optimize", OPTIMIZE, "--max-beds", "3", "--margin", "5K"))
    written = tmp_path / "opt.yaml"
    cli("optimize", OPTIMIZE, "--max-beds", "3", "--margin", "5K", "--write-case", str(written))
    assert d.case_text(str(written)) == written.read_text()
    # The optimum's train, run by the ODE solver, reaches the target (its check).
    assert d.train.conversion == pytest.approx(0.90, abs=1e-5)
    assert d.total_catalyst > 0 and 1 <= d.bed_count <= 3


def test_an_unreachable_design_target_carries_the_best_reached():
    # One adiabatic SO2 bed within its window falls short of X = 0.97: the
    # error says so, located at the case's target, with the reach as a number.
    with pytest.raises(rxtrain.InfeasibleError) as e:
        rxtrain.load_case(STAGING).optimize()
    cli_err = cli("optimize", STAGING, check=False)
    assert cli_err.returncode == 3
    assert e.value.message in cli_err.stderr
    assert (e.value.file, e.value.line) == (STAGING, 65)
    assert e.value.best_quantity == "conversion" and 0.5 < e.value.best < 0.97


GRID = ["feed.T=380degC:460degC:9", "train.B1.catalyst=20000kg:30000kg:3"]


@pytest.mark.parametrize("jobs", [1, 2])
def test_a_grid_sweep_equals_the_cli_csv_for_any_jobs(tmp_path, jobs):
    out = tmp_path / "grid.csv"
    cli("sweep", THREE_BED, "--vary", *GRID, "--csv", str(out), "--jobs", "2")
    s = rxtrain.load_case(THREE_BED).sweep(vary=GRID, jobs=jobs)
    assert s.to_csv() == out.read_text()
    assert len(s) == 27 and s.inputs == ["feed.T", "train.B1.catalyst"]


def test_a_monte_carlo_sweep_equals_the_cli_csv_and_json(tmp_path):
    args = ["--sample", "feed.T=normal(130degC,3K)", "--runs", "60", "--seed", "7"]
    csv, js = tmp_path / "mc.csv", tmp_path / "mc.json"
    cli("sweep", TANKS, *args, "--csv", str(csv), "--json", str(js))
    c = rxtrain.load_case(TANKS)
    s = c.sweep(sample={"feed.T": "normal(130degC,3K)"}, runs=60, seed=7, jobs=2)
    assert s.to_csv() == csv.read_text()
    import json

    same(s.to_dict(), json.loads(js.read_text()))
    # A shard is the CLI's shard.
    part = tmp_path / "part.csv"
    cli("sweep", TANKS, *args, "--shard", "2/3", "--csv", str(part))
    assert c.sweep(sample={"feed.T": "normal(130degC,3K)"}, runs=60, seed=7,
                   shard="2/3").to_csv() == part.read_text()


def test_sweep_columns_are_numpy_and_match_the_rows():
    c = rxtrain.load_case(THREE_BED)
    s = c.sweep(vary={"feed.T": ("380 degC", "460 degC", 5)}, outputs=["X", "B1.T_peak"])
    cols = s.columns
    assert list(cols) == ["run", "feed.T", "X", "B1.T_peak", "status", "message"]
    assert isinstance(cols["X"], numpy.ndarray) and cols["X"].dtype == numpy.float64
    assert cols["feed.T"][0] == pytest.approx(653.15) and cols["feed.T"][-1] == pytest.approx(733.15)
    assert s.units["feed.T"] == "K" and s.units["X"] == "-"
    # Each row is the single run of the case edited by hand.
    for i in (0, 4):
        one = c.with_values({"feed.T": float(cols["feed.T"][i])}).run()
        assert cols["X"][i] == pytest.approx(one.conversion, rel=1e-6)
    with pytest.raises(rxtrain.InputError) as e:
        c.sweep(vary={"feed.Tx": ("380 degC", "460 degC", 5)})
    assert "feed.T" in e.value.message
    with pytest.raises(rxtrain.InputError) as e:
        c.sweep(vary=GRID, seed=3)  # a seed belongs to Monte Carlo
    assert e.value.file == "seed"
    # Errors name the argument (the study's parsers name the CLI's options).
    for kwargs, argument in [(dict(vary=GRID, outputs="X,Q"), "outputs"),
                             (dict(vary=GRID, shard="3/2"), "shard"),
                             (dict(sample={"feed.T": "normal(420degC,5K)"}), "runs"),
                             (dict(vary={"feed.T": ("380 degC", "460 degC")}), "vary")]:
        with pytest.raises(rxtrain.InputError) as e:
            c.sweep(**kwargs)
        assert e.value.file == argument and e.value.line == 0, kwargs


def test_sweep_table_is_a_dataframe_with_pandas():
    pandas = pytest.importorskip("pandas")
    s = rxtrain.load_case(THREE_BED).sweep(sample={"feed.T": "normal(420degC,5K)"}, runs=30)
    frame = s.to_dataframe()
    assert isinstance(frame, pandas.DataFrame) and len(frame) == 30
    assert isinstance(s.table(), pandas.DataFrame)
    assert numpy.array_equal(frame["X"].to_numpy(), s.columns["X"])


def test_sweep_table_without_pandas_is_the_dict_of_columns(monkeypatch):
    real_import = builtins.__import__

    def no_pandas(name, *args, **kwargs):
        if name == "pandas" or name.startswith("pandas."):
            raise ImportError("no pandas here")
        return real_import(name, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", no_pandas)
    s = rxtrain.load_case(THREE_BED).sweep(sample={"feed.T": "normal(420degC,5K)"}, runs=10)
    table = s.table()
    assert isinstance(table, dict) and table["X"].shape == (10,)
    with pytest.raises(ImportError, match="pandas"):
        s.to_dataframe()
    assert isinstance(rxtrain.stages_frame(rxtrain.load_case(THREE_BED).run()), dict)


def test_ctrl_c_stops_a_long_sweep_within_a_second():
    """SIGINT sent to this process during a sweep of half a million runs
    (about a minute of work) raises KeyboardInterrupt within a second."""
    c = rxtrain.load_case(THREE_BED)
    sent = []

    def interrupt():
        sent.append(time.monotonic())
        os.kill(os.getpid(), signal.SIGINT)

    timer = threading.Timer(0.5, interrupt)
    timer.start()
    started = time.monotonic()
    try:
        with pytest.raises(KeyboardInterrupt):
            c.sweep(sample={"feed.T": "normal(420degC,5K)"}, runs=500_000, jobs=2)
    finally:
        timer.cancel()
    stopped = time.monotonic()
    assert sent, "the sweep ended before the signal was sent"
    assert stopped - sent[0] < 1.0, f"stopped {stopped - sent[0]:.2f} s after Ctrl-C"
    assert stopped - started < 2.0


def test_an_exception_from_progress_stops_the_sweep():
    calls = []

    def progress(done, total):
        calls.append((done, total))
        if len(calls) == 2:
            raise RuntimeError("enough")

    with pytest.raises(RuntimeError, match="enough"):
        rxtrain.load_case(THREE_BED).sweep(sample={"feed.T": "normal(420degC,5K)"},
                                           runs=500_000, progress=progress)
    assert calls[0][1] == 500_000 and calls[-1][0] < 500_000


def test_other_threads_run_python_while_a_sweep_solves():
    """The GIL is released during the sweep: a Python thread counts on."""
    ticks = []
    stop = threading.Event()

    def count():
        while not stop.is_set():
            ticks.append(1)
            time.sleep(0.001)

    t = threading.Thread(target=count)
    t.start()
    try:
        rxtrain.load_case(THREE_BED).sweep(sample={"feed.T": "normal(420degC,5K)"}, runs=5000,
                                           jobs=1)
    finally:
        stop.set()
        t.join()
    assert len(ticks) > 20


def test_cooling_options_equal_the_cli(tmp_path):
    r = rxtrain.load_case(STAGING).cooling_options(
        quench_T="200 degC", tube_count=2400, tube_diameter="38 mm", U=220.0)
    args = ("staging", STAGING, "--options", "--quench-T", "200degC", "--tubes", "2400x38mm",
            "--U", "220W/m2/K")
    same(r.to_dict(), cli_json(tmp_path, *args))
    assert r.text() == cli(*args).stdout
    kinds = [o["kind"] for o in r.to_dict()["options"]]
    assert sorted(kinds) == ["cooled", "intercooled", "quench"]
    with pytest.raises(rxtrain.InputError) as e:
        rxtrain.load_case(STAGING).cooling_options(tube_diameter="38 kg")
    assert e.value.file == "tube_diameter"
