// Case.sweep: a grid or Monte Carlo study through the sweep core (the same
// thread pool, chains and batches as `rxtrain sweep`), its rows as numpy
// columns, to_csv() and to_dict() by the command's own writers.
//
// Ctrl-C: the sweep runs without the GIL; every 100 ms the calling thread
// takes the GIL back to run Python's signal handlers (and the caller's
// progress callback). A KeyboardInterrupt (or an exception from the
// callback) cancels the sweep (SweepOptions::cancel): no run starts after
// it, the runs under way finish, and the exception is raised here.
#include "rxtrain/sweep/sweep.hpp"

#include <chrono>
#include <cmath>

#include "common.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/report/sha256.hpp"
#include "rxtrain/report/sweep_text.hpp"
#include "rxtrain/sweep/outputs.hpp"
#include "rxtrain/sweep/study.hpp"
#include "rxtrain/sweep/study_identity.hpp"
#include "rxtrain/sweep/summary.hpp"
#include "rxtrain/sweep/sweep_csv.hpp"

namespace rxtrain::python {

namespace {

using namespace rxtrain::sweep;
using namespace pybind11::literals;

struct PySweep {
  StudyIdentity id;
  Shard shard;
  bool monte_carlo = false;
  std::vector<std::string> inputs;
  std::vector<RunRow> rows;
  StudySummary summary;

  // One numpy column each: run, the inputs, the outputs (NaN where a run
  // has no value: see status), status and message.
  py::dict columns() const {
    const auto n = static_cast<py::ssize_t>(rows.size());
    py::dict out;
    py::array_t<long long> run(n);
    for (py::ssize_t r = 0; r < n; ++r)
      run.mutable_at(r) = static_cast<long long>(rows[static_cast<std::size_t>(r)].run);
    out["run"] = run;
    for (std::size_t i = 0; i < inputs.size(); ++i) {
      py::array_t<double> col(n);
      for (py::ssize_t r = 0; r < n; ++r)
        col.mutable_at(r) = rows[static_cast<std::size_t>(r)].inputs[i];
      out[py::str(inputs[i])] = col;
    }
    const auto& names = id.header.outputs;
    for (std::size_t k = 0; k < names.size(); ++k) {
      py::array_t<double> col(n);
      for (py::ssize_t r = 0; r < n; ++r) {
        const auto& v = rows[static_cast<std::size_t>(r)].result.outputs[k];
        col.mutable_at(r) = v ? *v : std::nan("");
      }
      out[py::str(names[k])] = col;
    }
    py::list status, message;
    for (const auto& row : rows) {
      status.append(run_status_name(row.result.status));
      message.append(text(row.result.message));
    }
    const py::module_ np = py::module_::import("numpy");
    out["status"] = np.attr("array")(status, "dtype"_a = "object");
    out["message"] = np.attr("array")(message, "dtype"_a = "object");
    return out;
  }
};

// Asks Python, with the GIL, whether to go on: its signal handlers (Ctrl-C
// raises KeyboardInterrupt here) and the caller's progress callback.
class Watcher {
 public:
  explicit Watcher(py::object progress) : progress_(std::move(progress)) {}
  void seen(std::size_t done, std::size_t total) {
    done_ = done;
    total_ = total;
  }
  bool stop() {
    py::gil_scoped_acquire hold;
    try {
      if (PyErr_CheckSignals() != 0) throw py::error_already_set();
      if (!progress_.is_none()) progress_(done_, total_);
    } catch (py::error_already_set& e) {
      raised_.emplace(std::move(e));
      return true;
    }
    return false;
  }
  std::optional<py::error_already_set>& raised() { return raised_; }

 private:
  py::object progress_;
  std::size_t done_ = 0, total_ = 0;
  std::optional<py::error_already_set> raised_;
};

// The argument of sweep() a parser's error is located at: the study's
// parsers name the command's options ("--vary"), a script its arguments.
std::string argument_name(const std::string& option) {
  if (option == "--output") return "outputs";
  return option.rfind("--", 0) == 0 ? option.substr(2) : option;
}

PySweep run(const PyCase& self, const std::vector<std::string>& vary,
            const std::vector<std::string>& sample, std::size_t runs,
            std::optional<std::uint64_t> seed, const std::optional<std::string>& output,
            std::size_t jobs, const std::string& shard, std::optional<double> rtol,
            const KelvinArg& limit_margin, const py::object& progress) {
  const Case& c = self.c;
  PySweep out;
  const CasePathTable table(c);
  Study study;
  std::optional<OutputSpec> parsed;
  try {
    out.shard = Shard::parse(shard);
    study = parse_study(vary, sample, runs, seed.value_or(1), table, units());
    parsed = output ? OutputSpec::parse(*output, c) : OutputSpec::defaults(c);
  } catch (const InputError& e) {
    throw InputError({argument_name(e.where().file), 0, 0}, e.message());
  }
  if (seed && !study.monte_carlo())
    throw InputError({"seed", 0, 0}, "seed applies to sample (Monte Carlo) only");
  const OutputSpec& outputs = *parsed;
  SweepOptions options;
  options.jobs = jobs;
  options.shard = out.shard;
  options.train = train_options(rtol.value_or(CvodeOptions{}.rtol), limit_margin);
  if (batched_study(c, table, outputs, options)) study.chain = kBatchRuns;
  out.id = study_identity(c, sha256_hex(self.bytes), study, table, outputs, options.train);
  out.monte_carlo = study.monte_carlo();
  out.inputs = study.input_names();

  Watcher watch(progress);
  options.progress = [&watch](std::size_t done, std::size_t total) { watch.seen(done, total); };
  options.progress_period = std::chrono::milliseconds(100);
  options.cancel = [&watch] { return watch.stop(); };
  try {
    py::gil_scoped_release free;
    out.rows = run_sweep(c, table, study, outputs, options);
  } catch (const SweepCancelled&) {
    if (watch.raised()) throw std::move(*watch.raised());
    throw;
  }
  out.summary = summarize_study(out.id.header.outputs, out.id.header.margin, out.rows);
  for (std::size_t k = 0; k < out.summary.percentiles.size(); ++k)
    out.summary.percentiles[k].unit = out.id.output_units[k];
  return out;
}

}  // namespace

void bind_sweep(py::module_& m, py::class_<PyCase>& cls) {
  py::class_<PySweep>(m, "SweepResult", "The rows of a study and what they add up to (SI units)")
      .def_property_readonly("columns", &PySweep::columns,
                             "One numpy array per column: run, the inputs, the outputs (NaN "
                             "where a run has no value), status and message")
      .def(
          "to_csv",
          [](const PySweep& s) { return sweep_csv(s.id.header, s.shard, s.inputs, s.rows); },
          "The CSV `rxtrain sweep --csv` writes")
      .def(
          "to_dict",
          [](const PySweep& s) {
            return json_to_python(
                sweep_json_text(s.id.header, s.shard, s.inputs, s.rows, s.summary));
          },
          "As `rxtrain sweep --json` writes it: rows, percentiles, design margin")
      .def(
          "text",
          [](const PySweep& s) {
            return text(sweep_text(s.inputs, s.id.header.outputs,
                                   ColumnUnits{s.id.input_units, s.id.output_units}, s.rows,
                                   s.summary, s.monte_carlo));
          },
          "The table and summary `rxtrain sweep` prints")
      .def_property_readonly("inputs", [](const PySweep& s) { return s.inputs; })
      .def_property_readonly("outputs", [](const PySweep& s) { return s.id.header.outputs; })
      .def_property_readonly(
          "units",
          [](const PySweep& s) {
            py::dict d;
            for (const auto& [name, unit] : s.id.header.units) d[py::str(name)] = unit;
            return d;
          },
          "The SI unit of every input and output column (\"-\" for a plain number)")
      .def_property_readonly("monte_carlo", [](const PySweep& s) { return s.monte_carlo; })
      .def("__len__", [](const PySweep& s) { return s.rows.size(); });

  cls.def("_sweep", &run, py::arg("vary"), py::arg("sample"), py::arg("runs"), py::arg("seed"),
          py::arg("outputs"), py::arg("jobs"), py::arg("shard"), py::arg("rtol"),
          py::arg("limit_margin"), py::arg("progress"));
}

}  // namespace rxtrain::python
