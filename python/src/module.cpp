// The Python module `rxtrain` (its compiled part, rxtrain._rxtrain): the
// library's case loading, runs and reports, bound with pybind11. The
// command line is not bound: a run here is the library call `rxtrain run`
// makes (run_checked), and a result's to_dict() is the JSON `rxtrain run
// --json` writes, parsed.
//
// Every C++ exception is translated: InputError (and a unit error in an
// argument) becomes rxtrain.InputError with file, line, column and message;
// InfeasibleError rxtrain.InfeasibleError (a SolverError, located too);
// SolverError rxtrain.SolverError. The GIL is released while solving.
#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>
#include <pybind11/stl.h>

#include <optional>
#include <string>
#include <variant>
#include <vector>

#include "rxtrain/analysis/train_warnings.hpp"
#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/report/json.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/study.hpp"

namespace py = pybind11;
using namespace rxtrain;

namespace {

// One unit database for the module: udunits2 is read once (about 4 ms)
// and the parser is only read afterwards.
const UnitParser& units() {
  static const UnitParser parser;
  return parser;
}

// nlohmann::json -> Python, through the json module: the exact document the
// CLI writes (doubles round-trip), null for non-finite numbers.
py::object to_python(const nlohmann::json& j) {
  return py::module_::import("json").attr("loads")(j.dump());
}

// A temperature difference given as a number (K) or as text with a unit.
double kelvin_difference(const std::variant<double, std::string>& v, const char* name) {
  if (const double* d = std::get_if<double>(&v)) return *d;
  try {
    return units().difference_to_si(std::get<std::string>(v),
                                    SiUnit::of("K", "a temperature difference"));
  } catch (const UnitError& e) {
    throw InputError({name, 0, 0}, e.what());
  }
}

struct PyResult {
  TrainResult result;

  py::object to_dict() const { return to_python(to_json(result)); }
  double conversion() const { return result.conversion; }
  std::vector<std::string> warnings() const { return result.warnings; }
  std::vector<std::string> species() const { return result.species; }
  // Each stage's scalars and its profile as numpy arrays (V m3, T K, X).
  py::list stages() const {
    py::list out;
    for (const auto& s : result.stages) {
      py::dict d;
      d["id"] = s.id;
      d["type"] = stage_kind_name(s.kind);
      d["volume"] = s.volume ? py::cast(*s.volume) : py::none();
      d["catalyst_mass"] = s.catalyst_mass ? py::cast(*s.catalyst_mass) : py::none();
      d["T_in"] = s.inlet.T;
      d["T_out"] = s.outlet.T;
      d["T_peak"] = s.T_max;
      d["conversion"] = s.conversion;
      d["duty"] = s.duty;
      std::vector<double> V, T, X;
      for (const auto& p : s.profile) {
        V.push_back(p.V);
        T.push_back(p.T);
        X.push_back(p.X);
      }
      d["V"] = py::array_t<double>(static_cast<py::ssize_t>(V.size()), V.data());
      d["T"] = py::array_t<double>(static_cast<py::ssize_t>(T.size()), T.data());
      d["X"] = py::array_t<double>(static_cast<py::ssize_t>(X.size()), X.data());
      out.append(d);
    }
    return out;
  }
};

struct PyCase {
  Case c;

  PyResult run(double rtol, const std::variant<double, std::string>& limit_margin,
               const std::optional<std::variant<double, std::string>>& approach_window) const {
    TrainOptions o;
    o.solvers.tube.cvode.rtol = rtol;
    if (const std::string err = o.solvers.tube.cvode.validate(); !err.empty())
      throw InputError({"rtol", 0, 0}, err);
    o.limit_check.margin = kelvin_difference(limit_margin, "limit_margin");
    if (!(o.limit_check.margin >= 0))
      throw InputError({"limit_margin", 0, 0}, "the margin must be zero or more");
    if (approach_window) {
      o.solvers.equilibrium.approach_T_window =
          kelvin_difference(*approach_window, "approach_window");
      if (!(o.solvers.equilibrium.approach_T_window > 0))
        throw InputError({"approach_window", 0, 0}, "the window must be above zero");
    }
    PyResult r;
    {
      py::gil_scoped_release free;
      r.result = run_checked(c, o);
    }
    return r;
  }

  // A copy with fields set by the sweep's case paths ("feed.T",
  // "train.R1.catalyst", ...), each value a number (SI) or text with a unit.
  PyCase with_values(const py::dict& values) const {
    const sweep::CasePathTable table(c);
    std::vector<std::size_t> which;
    std::vector<double> si;
    for (const auto& [key, value] : values) {
      const std::string name = py::cast<std::string>(key);
      const std::size_t i = table.find(name, "with_values");
      which.push_back(i);
      if (py::isinstance<py::str>(value))
        si.push_back(
            sweep::path_value(py::cast<std::string>(value), table.at(i), units(), "with_values"));
      else
        si.push_back(py::cast<double>(value));
    }
    PyCase out{c};
    sweep::CaseEditor(table, which).apply(c, si, out.c);
    return out;
  }

  std::vector<std::string> paths() const { return sweep::CasePathTable(c).names(); }
};

}  // namespace

PYBIND11_MODULE(_rxtrain, m) {
  m.doc() = "rxtrain: screening and study of catalytic reactor trains (compiled part)";
  m.attr("CAUTION") = std::string(kCaution);
  m.attr("__version__") = std::string(RXTRAIN_VERSION);

  static py::exception<InputError> input_error(m, "InputError", PyExc_ValueError);
  static py::exception<SolverError> solver_error(m, "SolverError", PyExc_RuntimeError);
  static py::exception<InfeasibleError> infeasible_error(m, "InfeasibleError", solver_error.ptr());
  // The located errors carry file, line, column and message as attributes.
  py::register_exception_translator([](std::exception_ptr p) {
    auto raise = [](const py::object& type, const std::string& what, const SourceLocation* at,
                    const std::string& message) {
      py::object e = type(what);
      e.attr("file") = at ? at->file : std::string();
      e.attr("line") = at ? at->line : 0;
      e.attr("column") = at ? at->column : 0;
      e.attr("message") = message;
      PyErr_SetObject(type.ptr(), e.ptr());
    };
    try {
      if (p) std::rethrow_exception(p);
    } catch (const InputError& e) {
      raise(input_error, e.what(), &e.where(), e.message());
    } catch (const InfeasibleError& e) {
      raise(infeasible_error, e.what(), &e.where(), e.message());
    } catch (const SolverError& e) {
      raise(solver_error, e.what(), nullptr, e.what());
    } catch (const UnitError& e) {
      raise(input_error, e.what(), nullptr, e.what());
    }
  });

  py::class_<PyResult>(m, "Result", "The result of a run: stages, streams, warnings")
      .def("to_dict", &PyResult::to_dict,
           "The whole result as `rxtrain run --json` writes it (SI units)")
      .def_property_readonly("conversion", &PyResult::conversion,
                             "Overall conversion of the key species at the train outlet")
      .def_property_readonly("warnings", &PyResult::warnings)
      .def_property_readonly("species", &PyResult::species)
      .def_property_readonly("stages", &PyResult::stages,
                             "Each stage's figures (SI) and its profile V, T, X as numpy arrays");

  py::class_<PyCase>(m, "Case", "A validated case, in SI units")
      .def_property_readonly("title", [](const PyCase& c) { return c.c.title; })
      .def_property_readonly("file", [](const PyCase& c) { return c.c.file; })
      .def_property_readonly("paths", &PyCase::paths,
                             "The case paths with_values and sweeps accept")
      .def("run", &PyCase::run, py::arg("rtol") = CvodeOptions{}.rtol,
           py::arg("limit_margin") = 5.0, py::arg("approach_window") = py::none(),
           "Rate and size every stage, as `rxtrain run`; margins in K or with a unit")
      .def("with_values", &PyCase::with_values, py::arg("values"),
           "A copy with fields set by case path: {\"feed.T\": \"420 degC\"} (numbers are SI)");

  m.def(
      "load_case", [](const std::string& path) { return PyCase{load_case(path, units())}; },
      py::arg("path"), "Read and validate a case file");
  m.def(
      "load_case_text",
      [](const std::string& text, const std::string& name) {
        return PyCase{load_case_from_string(text, name, units())};
      },
      py::arg("text"), py::arg("name") = "<text>",
      "Read and validate a case from YAML text; `name` stands for the file in messages");
}
