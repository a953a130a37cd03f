// What the parts of the compiled module share: the unit database, JSON to
// Python, the solver options every study takes, the case and result
// wrappers.
#pragma once

#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>
#include <pybind11/stl.h>

#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <variant>

#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain::python {

namespace py = pybind11;

// A temperature difference: a number (K) or text with a unit ("10 K").
using KelvinArg = std::variant<double, std::string>;

// One unit database for the module: udunits2 is read once (about 4 ms)
// and the parser is only read afterwards, from any thread.
const UnitParser& units();

// The text a reporter wrote (the CLI's --json) as Python data, through the
// json module: doubles round-trip exactly, null stays None.
py::object json_to_python(const std::string& text);
inline py::object to_python(const nlohmann::json& j) { return json_to_python(j.dump()); }

// Text from the library as a Python str. The parsers quote whole
// characters (base/utf8.hpp); should a message still hold invalid UTF-8,
// it becomes U+FFFD instead of a UnicodeDecodeError.
py::str text(const std::string& s);
py::list texts(const std::vector<std::string>& v);

// Kelvin from a KelvinArg; an InputError located at the argument `name`.
double kelvin_difference(const KelvinArg& v, const char* name);

// The solver and limit-check settings every command takes, as the CLI's
// --rtol and --limit-margin; InputError located at the argument for a bad
// value.
TrainOptions train_options(double rtol, const KelvinArg& limit_margin);

// A loaded case and the bytes it was read from (the sweep's header hashes
// them, as the CLI hashes the case file).
struct PyCase {
  Case c;
  std::string bytes;
};

// A train's result: stages, streams and profiles as Python data.
struct PyResult {
  TrainResult result;
};

// Binds Result, and Staging/Compare/Optimize/Sweep results with the Case
// methods that make them (studies.cpp, sweep.cpp).
void bind_result(py::module_& m);
void bind_studies(py::module_& m, py::class_<PyCase>& cls);
void bind_sweep(py::module_& m, py::class_<PyCase>& cls);

}  // namespace rxtrain::python
