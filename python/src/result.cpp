// The result of a run as Python data: scalars, streams as dicts, profiles
// as numpy arrays; to_dict() the CLI's JSON.
#include <vector>

#include "common.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/report/json.hpp"

namespace rxtrain::python {

const UnitParser& units() {
  static const UnitParser parser;
  return parser;
}

py::object json_to_python(const std::string& text) {
  return py::module_::import("json").attr("loads")(text);
}

py::str text(const std::string& s) {
  PyObject* o = PyUnicode_DecodeUTF8(s.data(), static_cast<Py_ssize_t>(s.size()), "replace");
  if (!o) throw py::error_already_set();
  return py::reinterpret_steal<py::str>(o);
}

py::list texts(const std::vector<std::string>& v) {
  py::list out;
  for (const auto& s : v) out.append(text(s));
  return out;
}

double kelvin_difference(const KelvinArg& v, const char* name) {
  if (const double* d = std::get_if<double>(&v)) return *d;
  try {
    return units().difference_to_si(std::get<std::string>(v),
                                    SiUnit::of("K", "a temperature difference"));
  } catch (const UnitError& e) {
    throw InputError({name, 0, 0}, e.what());
  }
}

TrainOptions train_options(double rtol, const KelvinArg& limit_margin) {
  TrainOptions o;
  o.solvers.tube.cvode.rtol = rtol;
  if (const std::string err = o.solvers.tube.cvode.validate(); !err.empty())
    throw InputError({"rtol", 0, 0}, err);
  o.limit_check.margin = kelvin_difference(limit_margin, "limit_margin");
  if (!(o.limit_check.margin >= 0))
    throw InputError({"limit_margin", 0, 0}, "the margin must be zero or more");
  return o;
}

namespace {

py::array_t<double> array(const std::vector<double>& v) {
  return py::array_t<double>(static_cast<py::ssize_t>(v.size()), v.data());
}

// {"T": K, "P": Pa, "flows": {species: mol/s}}.
py::dict stream(const Stream& s, const std::vector<std::string>& species) {
  py::dict flows;
  for (std::size_t i = 0; i < species.size() && i < s.F.size(); ++i)
    flows[py::str(species[i])] = s.F[i];
  py::dict d;
  d["T"] = s.T;
  d["P"] = s.P;
  d["flows"] = flows;
  return d;
}

// One stage: its figures (SI), inlet and outlet streams, and its profile:
// V (m3 from its inlet), T (K), X and each species' flow F (mol/s, one
// column per species) as numpy arrays.
py::dict stage(const StageResult& s, const std::vector<std::string>& species) {
  py::dict d;
  d["id"] = s.id;
  d["type"] = stage_kind_name(s.kind);
  d["volume"] = s.volume ? py::cast(*s.volume) : py::none();
  d["catalyst_mass"] = s.catalyst_mass ? py::cast(*s.catalyst_mass) : py::none();
  d["T_in"] = s.inlet.T;
  d["T_out"] = s.outlet.T;
  d["T_peak"] = s.T_max;
  d["T_min"] = s.T_min;
  d["conversion"] = s.conversion;
  d["duty"] = s.duty;
  d["inlet"] = stream(s.inlet, species);
  d["outlet"] = stream(s.outlet, species);
  std::vector<double> V, T, X;
  std::vector<double> F;  // row-major, points x species
  for (const auto& p : s.profile) {
    V.push_back(p.V);
    T.push_back(p.T);
    X.push_back(p.X);
    for (std::size_t i = 0; i < species.size(); ++i) F.push_back(i < p.F.size() ? p.F[i] : 0.0);
  }
  d["V"] = array(V);
  d["T"] = array(T);
  d["X"] = array(X);
  py::array_t<double> flows(
      {static_cast<py::ssize_t>(s.profile.size()), static_cast<py::ssize_t>(species.size())});
  std::copy(F.begin(), F.end(), flows.mutable_data());
  d["F"] = flows;
  return d;
}

}  // namespace

void bind_result(py::module_& m) {
  py::class_<PyResult>(m, "Result", "The result of a run: stages, streams, warnings (SI units)")
      .def(
          "to_dict", [](const PyResult& r) { return json_to_python(json_text(r.result)); },
          "The whole result as `rxtrain run --json` writes it (SI units)")
      .def_property_readonly(
          "conversion", [](const PyResult& r) { return r.result.conversion; },
          "Overall conversion of the key species at the train outlet")
      .def_property_readonly("title", [](const PyResult& r) { return text(r.result.title); })
      .def_property_readonly("key", [](const PyResult& r) { return r.result.key; })
      .def_property_readonly("warnings", [](const PyResult& r) { return texts(r.result.warnings); })
      .def_property_readonly("species", [](const PyResult& r) { return r.result.species; })
      .def_property_readonly(
          "feed", [](const PyResult& r) { return stream(r.result.feed, r.result.species); },
          "The feed: {\"T\": K, \"P\": Pa, \"flows\": {species: mol/s}}")
      .def_property_readonly(
          "outlet", [](const PyResult& r) { return stream(r.result.outlet, r.result.species); },
          "The train's outlet stream, as `feed`")
      .def_property_readonly(
          "stages",
          [](const PyResult& r) {
            py::list out;
            for (const auto& s : r.result.stages) out.append(stage(s, r.result.species));
            return out;
          },
          "Each stage's figures (SI), its inlet and outlet streams and its profile V, T, X, F "
          "as numpy arrays (F: one column per species)");
}

}  // namespace rxtrain::python
