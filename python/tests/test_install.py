"""pip installs the module offline (Debian's setuptools, wheel and pip; no
index, no build isolation), and the installed copy works on its own.

The suite reuses the build folder CMake already built (RXTRAIN_BUILD_DIR),
so this checks the packaging: setup.py, its metadata, what lands where,
and an import from the install. The build from nothing that a fresh
machine does is the same setup.py with its own CMake folder (docs/python.md
gives the time it took)."""

import os
import subprocess
import sys

import pytest
from conftest import SOURCE

import rxtrain


@pytest.mark.parametrize("where", ["python", "."])
def test_pip_install_offline_into_a_folder(tmp_path, where):
    build = os.environ.get("RXTRAIN_BUILD_DIR")
    if not build:
        pytest.skip("RXTRAIN_BUILD_DIR is not set (ctest sets it)")
    if subprocess.run([sys.executable, "-m", "pip", "--version"], capture_output=True).returncode:
        pytest.skip("pip is not installed (Debian: python3-pip)")
    target = tmp_path / "site"
    done = subprocess.run(
        [sys.executable, "-m", "pip", "install", "--no-build-isolation", "--no-index",
         "--no-deps", "--disable-pip-version-check", "--target", str(target),
         os.path.join(SOURCE, where)],
        capture_output=True, text=True, timeout=600, cwd=tmp_path)
    assert done.returncode == 0, done.stdout[-2000:] + done.stderr[-2000:]
    case = os.path.join(SOURCE, "cases", "so2-three-bed-converter.yaml")
    script = ("import rxtrain, sys; print(rxtrain.__file__); "
              f"print(repr(rxtrain.load_case({case!r}).run().conversion))")
    env = dict(os.environ, PYTHONPATH=str(target))
    child = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True,
                           env=env, cwd=tmp_path, check=True)
    where_from, conversion = child.stdout.split("\n")[:2]
    assert where_from.startswith(str(target))
    assert float(conversion) == rxtrain.load_case(case).run().conversion
