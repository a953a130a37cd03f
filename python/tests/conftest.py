"""Shared by the module's tests: where the repository, the CLI and the demo
cases are, and a comparison of JSON documents to the issue's bound."""

import math
import os
import subprocess

import pytest

SOURCE = os.environ.get("RXTRAIN_SOURCE_DIR", os.path.join(os.path.dirname(__file__), "..", ".."))
BIN = os.environ.get("RXTRAIN_BIN", os.path.join(SOURCE, "build", "rxtrain"))


def same(a, b, where="$"):
    """Equal documents, numbers within 1e-12 relative (issue 22's bound)."""
    if isinstance(a, dict):
        assert isinstance(b, dict) and sorted(a) == sorted(b), where
        for k in a:
            same(a[k], b[k], f"{where}.{k}")
    elif isinstance(a, list):
        assert isinstance(b, list) and len(a) == len(b), where
        for i, (x, y) in enumerate(zip(a, b)):
            same(x, y, f"{where}[{i}]")
    elif isinstance(a, float) or isinstance(b, float):
        assert math.isclose(a, b, rel_tol=1e-12, abs_tol=0.0) or a == b, f"{where}: {a} != {b}"
    else:
        assert a == b, f"{where}: {a!r} != {b!r}"


def cli(*args, check=True):
    """Runs the rxtrain binary; returns the finished process."""
    return subprocess.run([BIN, *args], check=check, capture_output=True, text=True)


@pytest.fixture
def case_path():
    return lambda name: os.path.join(SOURCE, "cases", name)
