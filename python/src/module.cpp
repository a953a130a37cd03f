// The Python module `rxtrain` (its compiled part, rxtrain._rxtrain): the
// library's case loading, runs, studies and reports, bound with pybind11.
// The command line is not bound: a run here is the library call `rxtrain
// run` makes (run_checked), a study the studies/ and sweep/ calls its
// commands make, and every to_dict() is the JSON the command's --json
// writes (the same report/ writer), parsed.
//
// Every C++ exception is translated: InputError (and a unit error in an
// argument) becomes rxtrain.InputError with file, line, column and message;
// InfeasibleError rxtrain.InfeasibleError (a SolverError, located, with the
// most the stage can reach as `best`); SolverError and any other library
// error rxtrain.SolverError. The GIL is released while solving.
#include <fstream>
#include <iterator>

#include "common.hpp"
#include "rxtrain/analysis/train_warnings.hpp"
#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/study.hpp"

namespace py = pybind11;
using namespace rxtrain;
using namespace rxtrain::python;

namespace {

PyResult run_case(const PyCase& self, double rtol, const KelvinArg& limit_margin,
                  const std::optional<KelvinArg>& approach_window) {
  TrainOptions o = train_options(rtol, limit_margin);
  if (approach_window) {
    o.solvers.equilibrium.approach_T_window =
        kelvin_difference(*approach_window, "approach_window");
    if (!(o.solvers.equilibrium.approach_T_window > 0))
      throw InputError({"approach_window", 0, 0}, "the window must be above zero");
  }
  PyResult r;
  py::gil_scoped_release free;
  r.result = run_checked(self.c, o);
  return r;
}

// A copy with fields set by the sweep's case paths ("feed.T",
// "train.R1.catalyst", ...), each value a number (SI) or text with a unit.
PyCase with_values(const PyCase& self, const py::dict& values) {
  const sweep::CasePathTable table(self.c);
  std::vector<std::size_t> which;
  std::vector<double> si;
  for (const auto& [key, value] : values) {
    const auto name = py::cast<std::string>(key);
    const std::size_t i = table.find(name, "with_values");
    which.push_back(i);
    if (py::isinstance<py::str>(value))
      si.push_back(
          sweep::path_value(py::cast<std::string>(value), table.at(i), units(), "with_values"));
    else
      si.push_back(py::cast<double>(value));
  }
  PyCase out{self.c, self.bytes};
  sweep::CaseEditor(table, which).apply(self.c, si, out.c);
  return out;
}

PyCase load_file(const std::string& path) {
  PyCase out{load_case(path, units()), {}};
  std::ifstream in(path, std::ios::binary);
  out.bytes.assign(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
  return out;
}

void register_errors(py::module_& m) {
  static py::exception<InputError> input_error(m, "InputError", PyExc_ValueError);
  static py::exception<SolverError> solver_error(m, "SolverError", PyExc_RuntimeError);
  static py::exception<InfeasibleError> infeasible_error(m, "InfeasibleError", solver_error.ptr());
  // The located errors carry file, line, column and message as attributes.
  py::register_exception_translator([](std::exception_ptr p) {
    auto raise = [](const py::object& type, const std::string& what, const SourceLocation* at,
                    const std::string& message) {
      py::object e = type(text(what));
      e.attr("file") = text(at ? at->file : std::string());
      e.attr("line") = at ? at->line : 0;
      e.attr("column") = at ? at->column : 0;
      e.attr("message") = text(message);
      return e;
    };
    try {
      if (p) std::rethrow_exception(p);
    } catch (const InputError& e) {
      PyErr_SetObject(input_error.ptr(),
                      raise(input_error, e.what(), &e.where(), e.message()).ptr());
    } catch (const InfeasibleError& e) {
      py::object x = raise(infeasible_error, e.what(), &e.where(), e.message());
      x.attr("best") = e.best() ? py::cast(*e.best()) : py::none();
      x.attr("best_quantity") = e.best_quantity();
      PyErr_SetObject(infeasible_error.ptr(), x.ptr());
    } catch (const SolverError& e) {
      PyErr_SetObject(solver_error.ptr(), raise(solver_error, e.what(), nullptr, e.what()).ptr());
    } catch (const UnitError& e) {
      PyErr_SetObject(input_error.ptr(), raise(input_error, e.what(), nullptr, e.what()).ptr());
    } catch (const py::error_already_set&) {
      throw;  // a Python error (KeyboardInterrupt) passes as it is
    } catch (const py::builtin_exception&) {
      throw;
    } catch (const std::bad_alloc&) {
      throw;  // MemoryError
    } catch (const std::exception& e) {
      // Any other library error is the library's fault, not the caller's
      // input; it still leaves the module as a Python exception.
      const std::string what = std::string("internal error: ") + e.what();
      PyErr_SetObject(solver_error.ptr(), raise(solver_error, what, nullptr, what).ptr());
    }
  });
}

}  // namespace

PYBIND11_MODULE(_rxtrain, m) {
  m.doc() = "rxtrain: screening and study of catalytic reactor trains (compiled part)";
  m.attr("CAUTION") = std::string(kCaution);
  m.attr("__version__") = std::string(RXTRAIN_VERSION);
  register_errors(m);
  bind_result(m);

  py::class_<PyCase> cls(m, "Case", "A validated case, in SI units");
  cls.def_property_readonly("title", [](const PyCase& c) { return text(c.c.title); })
      .def_property_readonly("file", [](const PyCase& c) { return c.c.file; })
      .def_property_readonly(
          "paths", [](const PyCase& c) { return sweep::CasePathTable(c.c).names(); },
          "The case paths with_values and sweeps accept")
      .def("run", &run_case, py::arg("rtol") = CvodeOptions{}.rtol, py::arg("limit_margin") = 5.0,
           py::arg("approach_window") = py::none(),
           "Rate and size every stage, as `rxtrain run`; margins in K or with a unit")
      .def("with_values", &with_values, py::arg("values"),
           "A copy with fields set by case path: {\"feed.T\": \"420 degC\"} (numbers are SI)");
  bind_studies(m, cls);
  bind_sweep(m, cls);

  m.def("load_case", &load_file, py::arg("path"), "Read and validate a case file");
  m.def(
      "load_case_text",
      [](const std::string& text, const std::string& name) {
        return PyCase{load_case_from_string(text, name, units()), text};
      },
      py::arg("text"), py::arg("name") = "<text>",
      "Read and validate a case from YAML text; `name` stands for the file in messages");
}
