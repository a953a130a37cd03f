// rxtrain fit LAB.yaml --data RUNS.csv --free PATH[,PATH...] [--bound PATH=LO:HI]...
//   [--sigma NAME=VALUE]... [--starts N] [--seed S] [--jobs N] [--json FILE]
//   [--report DIR] [--write-case OUT.yaml [--into DESIGN.yaml]]
#include <fmt/format.h>

#include <cstdio>
#include <fstream>
#include <iterator>
#include <map>
#include <memory>
#include <string>
#include <vector>

#include "commands.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/fit/fit.hpp"
#include "rxtrain/fit/fit_case.hpp"
#include "rxtrain/fit/lab_data.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/fit_report.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/study.hpp"

namespace rxtrain::cli {

namespace {

struct FitCommandOptions {
  std::string case_file;
  std::string data_file;
  std::vector<std::string> free;
  std::vector<std::string> bounds;
  std::vector<std::string> sigma;
  int starts = 1;
  std::uint64_t seed = 1;
  std::size_t jobs = 0;
  std::string json_path;
  std::string report_dir;
  std::string write_case;
  std::string into;
};

std::string read_file(const std::string& path, const std::string& what) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError({path, 0, 0}, fmt::format("cannot read {} \"{}\"", what, path));
  return std::string((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
}

int run_fit_command(const FitCommandOptions& o) {
  const UnitParser units;
  const Case lab = load_case(o.case_file, units);
  const sweep::CasePathTable table(lab);
  fit::FitOptions options;
  options.starts = o.starts;
  options.seed = o.seed;
  options.jobs = o.jobs;
  for (const std::string& list : o.free) {
    std::size_t start = 0;
    while (start <= list.size()) {
      const auto comma = list.find(',', start);
      const std::string path =
          list.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
      if (!path.empty()) options.free.push_back({table.find(path, "--free"), {}, {}});
      if (comma == std::string::npos) break;
      start = comma + 1;
    }
  }
  for (const std::string& b : o.bounds) {
    const auto eq = b.find('=');
    const auto colon = b.find(':', eq == std::string::npos ? 0 : eq);
    if (eq == std::string::npos || colon == std::string::npos)
      throw InputError({"--bound", 0, 0},
                       fmt::format("\"{}\" is not PATH=LO:HI (either side may be empty, e.g. "
                                   "reactions.r1.rate.Ea=20kJ/mol:)",
                                   b));
    const std::size_t i = table.find(b.substr(0, eq), "--bound");
    fit::FreeParameter* p = nullptr;
    for (auto& f : options.free)
      if (f.path == i) p = &f;
    if (!p)
      throw InputError({"--bound", 0, 0},
                       fmt::format("{} is bounded but not named by --free", table.at(i).name));
    const std::string lo = b.substr(eq + 1, colon - eq - 1), hi = b.substr(colon + 1);
    if (!lo.empty()) p->lower = sweep::path_value(lo, table.at(i), units, "--bound");
    if (!hi.empty()) p->upper = sweep::path_value(hi, table.at(i), units, "--bound");
    if (p->lower && p->upper && !(*p->lower < *p->upper))
      throw InputError({"--bound", 0, 0}, fmt::format("in \"{}\": LO must be below HI", b));
  }
  std::map<std::string, std::string> sigma;
  for (const std::string& s : o.sigma) {
    const auto eq = s.find('=');
    if (eq == std::string::npos)
      throw InputError({"--sigma", 0, 0},
                       fmt::format("\"{}\" is not OUTPUT=SD (e.g. X=0.005, R1.outlet.T=0.5K)", s));
    sigma[s.substr(0, eq)] = s.substr(eq + 1);
  }
  if (o.starts < 1) throw InputError({"--starts", 0, 0}, "--starts needs at least 1");
  if (!o.into.empty() && o.write_case.empty())
    throw InputError({"--into", 0, 0},
                     "--into names the case --write-case writes into; give "
                     "--write-case OUT.yaml too");
  const fit::LabData data = fit::read_lab_data(read_file(o.data_file, "the lab data"), o.data_file,
                                               lab, table, units, sigma);
  const fit::FitResult r = fit::run_fit(lab, table, data, options);

  // Rendered before anything is written; a failure leaves no file behind.
  OutputSet out;
  out.protect(o.case_file);
  out.protect(o.data_file);
  if (!o.into.empty()) out.protect(o.into);
  if (!o.json_path.empty()) out.add(o.json_path, fit_json_text(r));
  if (!o.write_case.empty()) {
    const std::string& target = o.into.empty() ? o.case_file : o.into;
    if (!o.into.empty()) (void)load_case(o.into, units);  // located errors for a bad design case
    out.add(o.write_case,
            fit::fitted_case_text(read_file(target, "the case"), target, r, units, o.write_case));
  }
  if (!o.report_dir.empty()) {
    const auto figures = fit_figures(r);
    add_report_files(out, o.report_dir,
                     fit_report_html(lab, r, figures, provenance_of(o.case_file, RXTRAIN_VERSION)),
                     figures);
  }
  out.commit();
  std::fputs(fit_text(lab.title, r).c_str(), stdout);
  return 0;
}

}  // namespace

Action setup_fit(CLI::App& app) {
  auto o = std::make_shared<FitCommandOptions>();
  app.footer(
      "Results are for screening and study; a design must be confirmed by licensed engineers "
      "under the codes that apply where it will be built.");
  app.add_option("case", o->case_file, "The lab reactor's case file (YAML)")->required();
  app.add_option("--data", o->data_file,
                 "The lab runs (CSV): columns named by case paths (the run's inputs, e.g. feed.T), "
                 "by sweep outputs (the measurements, e.g. X, R1.outlet.T) and sigma.OUTPUT (a "
                 "measurement's SD); cells in SI or with units, or a second header line of units")
      ->required();
  app.add_option("--free", o->free,
                 "The parameters to estimate, by case path, comma-separated (e.g. "
                 "reactions.r1.rate.A,reactions.r1.rate.Ea)")
      ->required();
  app.add_option("--bound", o->bounds, "Bounds of a free parameter, PATH=LO:HI with units");
  app.add_option("--sigma", o->sigma,
                 "A measured output's standard deviation for every run, OUTPUT=SD with units");
  app.add_option("--starts", o->starts,
                 "Starts of the least-squares search: the case's values, then N-1 seeded draws "
                 "around them; the best is kept")
      ->capture_default_str();
  app.add_option("--seed", o->seed, "Seed of the extra starts")->capture_default_str();
  app.add_option("--jobs", o->jobs, "Worker threads for the runs (0: every core)")
      ->capture_default_str();
  app.add_option("--json", o->json_path, "Write the estimates, covariance and runs as JSON (SI)");
  app.add_option("--report", o->report_dir,
                 "Write report.html (parity plots, residuals against each input) and the "
                 "figures as SVG into folder DIR");
  app.add_option("--write-case", o->write_case,
                 "Write the lab case (or with --into, the design case) with the fitted values");
  app.add_option("--into", o->into, "The design case --write-case writes the fitted values into");
  return [o] { return run_fit_command(*o); };
}

}  // namespace rxtrain::cli
