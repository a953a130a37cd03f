"""Builds and installs the rxtrain module with pip, offline:

    tools/install-deps --test        # the compiler, the libraries, pybind11, numpy
    pip install --no-build-isolation --no-index ./python     (or the repository root)

The compiled part is built by the repository's CMake (RXTRAIN_PYTHON), in
the build folder setuptools gives it, or in $RXTRAIN_BUILD_DIR when that
names a folder already configured (it is then only brought up to date).
The -O2 SUNDIALS of tools/deps-sundials, when the build uses it, is copied
beside the module, which finds it there ($ORIGIN); Debian's libsundials is
found where Debian puts it.
"""

import glob
import os
import re
import shutil
import subprocess
import sys

from setuptools import Extension, setup
from setuptools.command.build_ext import build_ext

HERE = os.path.dirname(os.path.abspath(__file__))
# This file serves from python/ and, through a link, from the root.
ROOT = HERE if os.path.isdir(os.path.join(HERE, "python", "rxtrain")) else os.path.dirname(HERE)
PACKAGE = os.path.join(ROOT, "python", "rxtrain")


def version():
    with open(os.path.join(ROOT, "CMakeLists.txt")) as f:
        return re.search(r"project\(rxtrain VERSION ([0-9.]+)", f.read()).group(1)


class CMakeBuild(build_ext):
    """The extension is the CMake target _rxtrain, not a list of sources."""

    def build_extension(self, ext):
        given = os.environ.get("RXTRAIN_BUILD_DIR")
        if given and os.path.isfile(os.path.join(given, "CMakeCache.txt")):
            build = given
        else:
            build = os.path.join(os.path.abspath(self.build_temp), "cmake")
            os.makedirs(build, exist_ok=True)
            subprocess.check_call([
                "cmake", "-S", ROOT, "-B", build, "-DCMAKE_BUILD_TYPE=Release",
                "-DRXTRAIN_PYTHON=ON", "-DRXTRAIN_PYTHON_PORTABLE=ON", "-DRXTRAIN_TESTS=OFF",
                f"-DPython3_EXECUTABLE={sys.executable}"])
        jobs = os.environ.get("CMAKE_BUILD_PARALLEL_LEVEL", "2")
        subprocess.check_call(["cmake", "--build", build, "--target", "_rxtrain", "-j", jobs])
        built = os.path.join(build, "python", "rxtrain")
        target = os.path.dirname(os.path.abspath(self.get_ext_fullpath(ext.name)))
        os.makedirs(target, exist_ok=True)
        modules = glob.glob(os.path.join(built, "_rxtrain*.so"))
        if len(modules) != 1:
            raise RuntimeError(f"expected one _rxtrain module in {built}, found {modules}")
        shutil.copy2(modules[0], self.get_ext_fullpath(ext.name))
        libs = []
        for lib in glob.glob(os.path.join(built, "libsundials_*.so.*")):
            shutil.copy2(lib, target)
            libs.append(os.path.join(target, os.path.basename(lib)))
        if libs:  # each finds the others beside it, not in the build folder
            subprocess.check_call(["cmake", f"-DFILES={';'.join(libs)}", "-P",
                                   os.path.join(ROOT, "python", "cmake", "origin_rpath.cmake")])


setup(
    name="rxtrain",
    version=version(),
    description="Screening and study of trains of catalytic reactors (results for screening "
                "only; designs must be confirmed by licensed engineers)",
    packages=["rxtrain"],
    package_dir={"rxtrain": os.path.relpath(PACKAGE, HERE)},
    ext_modules=[Extension("rxtrain._rxtrain", sources=[])],
    cmdclass={"build_ext": CMakeBuild},
    install_requires=["numpy"],
    python_requires=">=3.9",
    zip_safe=False,
    # Setuptools' work folders under python/, whichever folder pip was
    # given: never in the repository's own build/ (CMake's).
    options={"build": {"build_base": os.path.join(ROOT, "python", "build")},
             "egg_info": {"egg_base": os.path.join(ROOT, "python")}},
)
