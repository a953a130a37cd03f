// Case.staging, Case.cooling_options, Case.compare and Case.optimize: the
// studies/ calls the
// commands make, their results with to_dict() (the command's --json, by
// the same writer) and text() (what the command prints).
#include <algorithm>
#include <cctype>
#include <cmath>

#include "common.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/report/compare_report.hpp"
#include "rxtrain/report/cooling_options_report.hpp"
#include "rxtrain/report/json.hpp"
#include "rxtrain/report/optimize_output.hpp"
#include "rxtrain/report/staging_report.hpp"
#include "rxtrain/studies/compare.hpp"
#include "rxtrain/studies/cooling_options.hpp"
#include "rxtrain/studies/optimize.hpp"
#include "rxtrain/studies/staging.hpp"
#include "rxtrain/studies/write_case.hpp"

namespace rxtrain::python {

namespace {

struct PyStaging {
  StagingResult r;
};
struct PyCompare {
  CompareResult r;
};
struct PyCoolingOptions {
  CoolingOptionsResult r;
};
struct PyDesign {
  Case c;
  std::string bytes;
  DesignOptions options;
  DesignResult r;
};

ReturnTo return_to(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(),
                 [](unsigned char ch) { return static_cast<char>(std::tolower(ch)); });
  if (s == "inlet") return ReturnTo::Inlet;
  if (s == "max-rate" || s == "max_rate") return ReturnTo::MaxRate;
  throw InputError({"return_to", 0, 0}, "must be \"inlet\" or \"max-rate\", got \"" + s + "\"");
}

PyStaging staging(const PyCase& self, double approach, const std::string& to, double min_return,
                  int max_beds, double rtol, const KelvinArg& limit_margin) {
  StagingOptions o;
  o.approach = approach;
  o.return_to = return_to(to);
  o.min_return = min_return;
  o.max_beds = max_beds;
  const TrainOptions t = train_options(rtol, limit_margin);
  o.solvers = t.solvers;
  o.limit_check = t.limit_check;
  if (const std::string err = o.validate(); !err.empty()) throw InputError({"staging", 0, 0}, err);
  PyStaging out;
  py::gil_scoped_release free;
  out.r = run_staging(self.c, o);
  return out;
}

// A positive quantity in SI: a number, or text with a unit ("38 mm");
// an InputError located at the argument `name`.
double positive_si(const KelvinArg& v, const char* name, const SiUnit& unit) {
  double x = 0;
  if (const double* d = std::get_if<double>(&v)) {
    x = *d;
  } else {
    try {
      x = units().to_si(std::get<std::string>(v), unit);
    } catch (const UnitError& e) {
      throw InputError({name, 0, 0}, e.what());
    }
  }
  if (!(x > 0) || !std::isfinite(x)) throw InputError({name, 0, 0}, "expected a positive value");
  return x;
}

PyCoolingOptions cooling_options(const PyCase& self, const std::optional<KelvinArg>& quench_T,
                                 std::optional<int> tube_count,
                                 const std::optional<KelvinArg>& tube_diameter,
                                 const std::optional<KelvinArg>& U, double approach, int max_beds,
                                 double rtol, const KelvinArg& limit_margin) {
  CoolingOptionsOptions o;
  o.staging.approach = approach;
  o.staging.max_beds = max_beds;
  const TrainOptions t = train_options(rtol, limit_margin);
  o.staging.solvers = t.solvers;
  o.staging.limit_check = t.limit_check;
  if (quench_T) o.quench_T = positive_si(*quench_T, "quench_T", SiUnit::of("K", "a temperature"));
  if (tube_count) {
    if (*tube_count < 1) throw InputError({"tube_count", 0, 0}, "expected a positive count");
    o.tubes.count = *tube_count;
  }
  if (tube_diameter)
    o.tubes.diameter = positive_si(*tube_diameter, "tube_diameter", SiUnit::of("m", "a length"));
  if (U) o.tubes.U = positive_si(*U, "U", SiUnit::of("W/(m2*K)", "a heat transfer coefficient"));
  if (const std::string err = o.validate(); !err.empty())
    throw InputError({"cooling_options", 0, 0}, err);
  PyCoolingOptions out;
  py::gil_scoped_release free;
  out.r = run_cooling_options(self.c, o);
  return out;
}

PyCompare compare(const PyCase& self, double rtol, const KelvinArg& limit_margin) {
  CompareOptions o;
  o.train = train_options(rtol, limit_margin);
  PyCompare out;
  py::gil_scoped_release free;
  out.r = compare_layouts(self.c, o);
  return out;
}

PyDesign optimize(const PyCase& self, std::optional<int> beds, std::optional<int> max_beds,
                  bool fixed_feed_T, const KelvinArg& margin, const KelvinArg& limit_margin) {
  PyDesign out{self.c, self.bytes, {}, {}};
  DesignOptions& o = out.options;
  if (beds && max_beds) throw InputError({"beds", 0, 0}, "give beds or max_beds, not both");
  for (const auto& [n, name] : {std::pair{beds, "beds"}, std::pair{max_beds, "max_beds"}})
    if (n && (*n < 1 || *n > 20)) throw InputError({name, 0, 0}, "must be from 1 to 20");
  o.beds = beds;
  o.max_beds = max_beds;
  o.fixed_feed_T = fixed_feed_T;
  o.margin = kelvin_difference(margin, "margin");
  if (!(o.margin >= 0))
    throw InputError({"margin", 0, 0}, "a margin inside the limits cannot be negative");
  o.limit_check = train_options(CvodeOptions{}.rtol, limit_margin).limit_check;
  if (const std::string err = o.validate(); !err.empty()) throw InputError({"optimize", 0, 0}, err);
  py::gil_scoped_release free;
  out.r = optimize_design(out.c, o);
  return out;
}

PyResult as_result(const TrainResult& r) { return PyResult{r}; }

}  // namespace

void bind_studies(py::module_& m, py::class_<PyCase>& cls) {
  py::class_<PyStaging>(m, "StagingResult",
                        "The interstage-cooling check: the train as given, and the beds a "
                        "simple policy needs")
      .def(
          "to_dict", [](const PyStaging& s) { return json_to_python(staging_json_text(s.r)); },
          "As `rxtrain staging --json` writes it (SI units)")
      .def(
          "text", [](const PyStaging& s) { return text(format_staging_report(s.r)); },
          "What `rxtrain staging` prints")
      .def_property_readonly("reachable", [](const PyStaging& s) { return s.r.reachable; })
      .def_property_readonly(
          "limited_by", [](const PyStaging& s) { return std::string(limit_name(s.r.limited_by)); })
      .def_property_readonly("limiting_stage",
                             [](const PyStaging& s) { return s.r.limiting_stage; })
      .def_property_readonly("target", [](const PyStaging& s) { return s.r.target; })
      .def_property_readonly("target_reached",
                             [](const PyStaging& s) { return s.r.target_reached; })
      .def_property_readonly("beds_needed", [](const PyStaging& s) { return s.r.beds_needed; })
      .def_property_readonly("as_given_conversion",
                             [](const PyStaging& s) { return s.r.as_given_conversion; })
      .def_property_readonly("staged_conversion",
                             [](const PyStaging& s) { return s.r.staged_conversion; })
      .def_property_readonly("warnings", [](const PyStaging& s) { return texts(s.r.warnings); })
      .def_property_readonly(
          "as_given_run", [](const PyStaging& s) { return as_result(s.r.as_given_run); },
          "The stages of the train as given that ran, as a Result")
      .def_property_readonly(
          "staged_run", [](const PyStaging& s) { return as_result(s.r.staged_run); },
          "The staged beds and exchangers, as a Result (profiles for plotting)");

  py::class_<PyCoolingOptions>(m, "CoolingOptionsResult",
                               "The cooling options side by side, best feasible first")
      .def(
          "to_dict",
          [](const PyCoolingOptions& r) { return json_to_python(cooling_options_json_text(r.r)); },
          "As `rxtrain staging --options --json` writes it (SI units)")
      .def(
          "text", [](const PyCoolingOptions& r) { return text(format_cooling_options(r.r)); },
          "What `rxtrain staging --options` prints");

  py::class_<PyCompare>(m, "CompareResult", "Layouts of the train compared, best first")
      .def(
          "to_dict", [](const PyCompare& c) { return json_to_python(compare_json_text(c.r)); },
          "As `rxtrain compare --json` writes it (SI units)")
      .def(
          "text", [](const PyCompare& c) { return text(format_compare_table(c.r)); },
          "What `rxtrain compare` prints");

  py::class_<PyDesign>(m, "DesignResult", "The least-catalyst layout of adiabatic beds")
      .def(
          "to_dict", [](const PyDesign& d) { return json_to_python(optimize_json_text(d.r)); },
          "As `rxtrain optimize --json` writes it (SI units)")
      .def(
          "text", [](const PyDesign& d) { return text(optimize_table(d.r, d.options)); },
          "What `rxtrain optimize` prints")
      .def_property_readonly("bed_count", [](const PyDesign& d) { return d.r.best.beds; })
      .def_property_readonly("total_volume",
                             [](const PyDesign& d) { return d.r.best.total_volume; })
      .def_property_readonly("total_catalyst",
                             [](const PyDesign& d) { return d.r.best.total_catalyst; })
      .def_property_readonly("warnings", [](const PyDesign& d) { return texts(d.r.warnings); })
      .def_property_readonly(
          "train", [](const PyDesign& d) { return as_result(d.r.train); },
          "The optimum's train as run_train ran it (the independent check), as a Result")
      .def(
          "case_text",
          [](const PyDesign& d, const std::string& name) {
            return design_case_text(d.c, d.bytes, d.r, d.r.best, units(), name);
          },
          py::arg("name") = "optimized.yaml",
          "The case with the optimum's train, as `rxtrain optimize --write-case` writes it");

  cls.def("staging", &staging, py::arg("approach") = 0.9, py::arg("return_to") = "inlet",
          py::arg("min_return") = 0.2, py::arg("max_beds") = 10,
          py::arg("rtol") = CvodeOptions{}.rtol, py::arg("limit_margin") = 5.0,
          "The interstage-cooling check, as `rxtrain staging`")
      .def("cooling_options", &cooling_options, py::arg("quench_T") = py::none(),
           py::arg("tube_count") = py::none(), py::arg("tube_diameter") = py::none(),
           py::arg("U") = py::none(), py::arg("approach") = 0.9, py::arg("max_beds") = 10,
           py::arg("rtol") = CvodeOptions{}.rtol, py::arg("limit_margin") = 5.0,
           "The cooling options side by side, as `rxtrain staging --options`")
      .def("compare", &compare, py::arg("rtol") = CvodeOptions{}.rtol,
           py::arg("limit_margin") = 5.0, "Every layout of the train, as `rxtrain compare`")
      .def("optimize", &optimize, py::arg("beds") = py::none(), py::arg("max_beds") = py::none(),
           py::arg("fixed_feed_T") = false, py::arg("margin") = 0.0, py::arg("limit_margin") = 5.0,
           "The least-catalyst layout of adiabatic beds, as `rxtrain optimize`; raises "
           "InfeasibleError (with `best`) when no layout reaches the target");
}

}  // namespace rxtrain::python
