#include "rxtrain/sweep/study.hpp"

#include <fmt/format.h>

#include <charconv>
#include <cmath>
#include <nlohmann/json.hpp>
#include <set>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/suggest.hpp"
#include "rxtrain/chem/thermo.hpp"

namespace rxtrain::sweep {

namespace {

std::string trim(std::string s) {
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.front()))) s.erase(0, 1);
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.back()))) s.pop_back();
  return s;
}

std::vector<std::string> split(const std::string& s, char sep) {
  std::vector<std::string> out;
  std::size_t start = 0;
  for (;;) {
    const auto end = s.find(sep, start);
    out.push_back(
        trim(s.substr(start, end == std::string::npos ? std::string::npos : end - start)));
    if (end == std::string::npos) return out;
    start = end + 1;
  }
}

[[noreturn]] void fail(const std::string& option, const std::string& message) {
  throw InputError({option, 0, 0}, message);
}

// Text with a unit of the field's dimension, in SI; UnitError otherwise.
double to_si_of(const std::string& text, const CasePath& p, const UnitParser& units) {
  UnitOptions uo;
  uo.plain_cal_is_thermochemical = p.chemistry_units;
  return units.to_si(text, p.unit, uo);
}

}  // namespace

double path_value(const std::string& text, const CasePath& p, const UnitParser& units,
                  const std::string& option) {
  try {
    return to_si_of(text, p, units);
  } catch (const UnitError& e) {
    fail(option, fmt::format("{} needs {}: {}", p.name, p.unit.to_string(), e.what()));
  }
}

namespace {

// A value of the field's dimension, in SI.
double quantity(const std::string& text, const CasePath& p, const UnitParser& units,
                const std::string& option, const std::string& spec) {
  try {
    return to_si_of(text, p, units);
  } catch (const UnitError& e) {
    fail(option,
         fmt::format("in \"{}\": {} needs {}: {}", spec, p.name, p.unit.to_string(), e.what()));
  }
}

// A difference of the field's dimension (an SD): the unit's offset, as for
// degC, cancels: "5 degC" is 5 K.
double difference(const std::string& text, const CasePath& p, const UnitParser& units,
                  const std::string& option, const std::string& spec) {
  const std::string t = trim(text);
  double v = 0;
  const char* begin = t.data() + (!t.empty() && t.front() == '+' ? 1 : 0);
  const auto res = std::from_chars(begin, t.data() + t.size(), v);
  if (res.ec != std::errc() || res.ptr == begin)
    fail(option, fmt::format("in \"{}\": \"{}\" is not a number with an optional unit", spec, t));
  const std::string unit = trim(std::string(res.ptr, t.data() + t.size()));
  if (unit.empty()) return v;
  return quantity(t, p, units, option, spec) - quantity("0 " + unit, p, units, option, spec);
}

double plain_number(const std::string& text, const std::string& option, const std::string& spec) {
  const std::string t = trim(text);
  double v = 0;
  const auto res = std::from_chars(t.data(), t.data() + t.size(), v);
  if (res.ec != std::errc() || res.ptr != t.data() + t.size() || !std::isfinite(v))
    fail(option, fmt::format("in \"{}\": \"{}\" is not a plain number", spec, t));
  return v;
}

void check_in_range(double v, const CasePath& p, const std::string& option,
                    const std::string& spec) {
  if (!p.contains(v))
    fail(option, fmt::format("in \"{}\": {} = {} (SI) is out of range: it must be {}", spec, p.name,
                             v, p.domain_text()));
}

Axis parse_axis(std::string spec, const CasePathTable& table, const UnitParser& units) {
  const std::string option = "--vary";
  const std::string original = spec;
  bool log = false;
  if (spec.rfind("log:", 0) == 0) {
    log = true;
    spec.erase(0, 4);
  }
  const auto eq = spec.find('=');
  if (eq == std::string::npos)
    fail(option,
         fmt::format("\"{}\" is not PATH=START:STOP:N (e.g. feed.T=120degC:200degC:41)", original));
  Axis a;
  a.name = trim(spec.substr(0, eq));
  a.path = table.find(a.name, option);
  std::string range = spec.substr(eq + 1);
  if (range.rfind("log:", 0) == 0) {
    log = true;
    range.erase(0, 4);
  }
  a.log = log;
  const auto parts = split(range, ':');
  if (parts.size() != 3)
    fail(option,
         fmt::format("\"{}\" is not PATH=START:STOP:N (e.g. feed.T=120degC:200degC:41)", original));
  const CasePath& p = table.at(a.path);
  a.start = quantity(parts[0], p, units, option, original);
  a.stop = quantity(parts[1], p, units, option, original);
  std::size_t n = 0;
  const auto res = std::from_chars(parts[2].data(), parts[2].data() + parts[2].size(), n);
  if (res.ec != std::errc() || res.ptr != parts[2].data() + parts[2].size() || n < 1)
    fail(option, fmt::format("in \"{}\": N must be a whole number of points >= 1, got \"{}\"",
                             original, parts[2]));
  if (n == 1 && a.start != a.stop)
    fail(option, fmt::format("in \"{}\": one point cannot span {} to {}; give N >= 2", original,
                             parts[0], parts[1]));
  a.n = n;
  if (log && !(a.start > 0 && a.stop > 0))
    fail(option,
         fmt::format("in \"{}\": a logarithmic axis needs START and STOP above 0 (SI)", original));
  check_in_range(a.start, p, option, original);
  check_in_range(a.stop, p, option, original);
  // Interior points lie between the ends, so inside every interval range;
  // checked anyway, as rounding could step past an open bound.
  for (std::size_t i = 0; i < a.n; ++i) check_in_range(a.value(i), p, option, original);
  return a;
}

SampledInput parse_sample(const std::string& spec, const CasePathTable& table,
                          const UnitParser& units) {
  const std::string option = "--sample";
  const auto eq = spec.find('=');
  const auto open = spec.find('(', eq == std::string::npos ? 0 : eq);
  if (eq == std::string::npos || open == std::string::npos || spec.back() != ')')
    fail(option, fmt::format("\"{}\" is not PATH=normal(MEAN,SD), PATH=uniform(LO,HI) or "
                             "PATH=lognormal(MEDIAN,SIGMA)",
                             spec));
  SampledInput s;
  s.name = trim(spec.substr(0, eq));
  s.path = table.find(s.name, option);
  const CasePath& p = table.at(s.path);
  const std::string kind = trim(spec.substr(eq + 1, open - eq - 1));
  const auto args = split(spec.substr(open + 1, spec.size() - open - 2), ',');
  if (args.size() != 2) fail(option, fmt::format("in \"{}\": {} takes two parameters", spec, kind));
  Distribution& d = s.dist;
  if (kind == "normal") {
    d.kind = Distribution::Kind::Normal;
    d.a = quantity(args[0], p, units, option, spec);
    d.b = difference(args[1], p, units, option, spec);
    if (!(d.b > 0)) fail(option, fmt::format("in \"{}\": the SD must be above 0", spec));
  } else if (kind == "uniform") {
    d.kind = Distribution::Kind::Uniform;
    d.a = quantity(args[0], p, units, option, spec);
    d.b = quantity(args[1], p, units, option, spec);
    if (!(d.a < d.b)) fail(option, fmt::format("in \"{}\": LO must be below HI", spec));
    check_in_range(d.a, p, option, spec);
    check_in_range(d.b, p, option, spec);
  } else if (kind == "lognormal") {
    d.kind = Distribution::Kind::LogNormal;
    d.a = quantity(args[0], p, units, option, spec);
    d.b = plain_number(args[1], option, spec);
    if (!(d.a > 0)) fail(option, fmt::format("in \"{}\": the median must be above 0 (SI)", spec));
    if (!(d.b > 0))
      fail(option,
           fmt::format("in \"{}\": SIGMA (the SD of ln X, a plain number) must be above 0", spec));
  } else {
    fail(option, fmt::format("in \"{}\": unknown distribution \"{}\"; use normal, uniform or "
                             "lognormal",
                             spec, kind));
  }
  return s;
}

}  // namespace

double Axis::value(std::size_t i) const {
  if (i == 0) return start;
  if (i + 1 == n) return stop;
  const double t = static_cast<double>(i) / static_cast<double>(n - 1);
  if (log) return std::exp(std::log(start) + t * (std::log(stop) - std::log(start)));
  return start + t * (stop - start);
}

std::size_t Study::run_count() const {
  if (monte_carlo()) return runs;
  std::size_t m = 1;
  for (const auto& a : axes) m *= a.n;
  return m;
}

std::vector<std::size_t> Study::paths() const {
  std::vector<std::size_t> out;
  for (const auto& a : axes) out.push_back(a.path);
  for (const auto& s : samples) out.push_back(s.path);
  if (fitted)
    for (const auto& p : fitted->params) out.push_back(p.path);
  return out;
}

std::vector<std::string> Study::input_names() const {
  std::vector<std::string> out;
  for (const auto& a : axes) out.push_back(a.name);
  for (const auto& s : samples) out.push_back(s.name);
  if (fitted)
    for (const auto& p : fitted->params) out.push_back(p.name);
  return out;
}

void Study::inputs(std::size_t run, std::span<double> out) const {
  if (monte_carlo()) {
    for (std::size_t j = 0; j < samples.size(); ++j)
      out[j] = samples[j].dist.sample(seed, run, static_cast<std::uint32_t>(j));
    if (fitted)
      fitted->draw(seed, run, static_cast<std::uint32_t>(samples.size()),
                   out.subspan(samples.size()));
    return;
  }
  std::size_t rest = run;
  for (std::size_t j = axes.size(); j-- > 0;) {
    out[j] = axes[j].value(rest % axes[j].n);
    rest /= axes[j].n;
  }
}

std::vector<std::string> Study::definition() const {
  std::vector<std::string> out;
  if (monte_carlo()) {
    out.push_back("mode: monte-carlo");
    for (const auto& s : samples)
      out.push_back(fmt::format("sample: {}={}", s.name, s.dist.to_string()));
    if (fitted) {
      // Everything the draws depend on, in full precision.
      for (const auto& p : fitted->params)
        out.push_back(
            p.T_ref_fit > 0
                ? fmt::format("sample-fit: {}={}({}) at T_ref {} K, rewritten for T_ref {} K with "
                              "Ea {}",
                              p.name, p.log ? "log" : "linear", p.estimate, p.T_ref_fit,
                              p.T_ref_case,
                              p.ea_param >= 0 ? "drawn" : fmt::format("{} J/mol", p.Ea))
                : fmt::format("sample-fit: {}={}({})", p.name, p.log ? "log" : "linear",
                              p.estimate));
      std::string l;
      for (Eigen::Index i = 0; i < fitted->L.rows(); ++i)
        for (Eigen::Index j = 0; j <= i; ++j)
          l += fmt::format("{}{}", l.empty() ? "" : " ", fitted->L(i, j));
      out.push_back("sample-fit-cholesky: " + l);
    }
    out.push_back(fmt::format("runs: {}", runs));
    out.push_back(fmt::format("seed: {}", seed));
  } else {
    out.push_back("mode: grid");
    for (const auto& a : axes)
      out.push_back(
          fmt::format("vary: {}={}{}:{}:{}", a.name, a.log ? "log:" : "", a.start, a.stop, a.n));
    out.push_back(fmt::format("runs: {}", run_count()));
  }
  // The rows depend on it (warm starts), so shards must share it.
  out.push_back(fmt::format("chain: {}", chain_length()));
  return out;
}

void FittedDraws::draw(std::uint64_t seed, std::uint64_t run, std::uint32_t first_input,
                       std::span<double> values) const {
  const auto n = static_cast<Eigen::Index>(params.size());
  Eigen::VectorXd z(n);
  for (Eigen::Index i = 0; i < n; ++i)
    z(i) = standard_normal(seed, run, first_input + static_cast<std::uint32_t>(i));
  const Eigen::VectorXd y = L.triangularView<Eigen::Lower>() * z;
  for (Eigen::Index i = 0; i < n; ++i) {
    const Param& p = params[static_cast<std::size_t>(i)];
    values[i] = p.log ? p.estimate * std::exp(y(i)) : p.estimate + y(i);
  }
  for (Eigen::Index i = 0; i < n; ++i) {
    const Param& p = params[static_cast<std::size_t>(i)];
    if (!(p.T_ref_fit > 0)) continue;
    const double Ea = p.ea_param >= 0 ? values[p.ea_param] : p.Ea;
    values[i] *= p.T_ref_case > 0
                     ? std::exp(-Ea / kGasConstant * (1 / p.T_ref_case - 1 / p.T_ref_fit))
                     : std::exp(Ea / (kGasConstant * p.T_ref_fit));
  }
}

FittedDraws read_fitted_draws(const std::string& text, const std::string& file,
                              const CasePathTable& table, const Case& c) {
  const auto bad = [&](const std::string& what) -> void {
    throw InputError({file, 0, 0},
                     fmt::format("{} is not the JSON of `rxtrain fit --json`: {}", file, what));
  };
  nlohmann::json j;
  try {
    j = nlohmann::json::parse(text);
  } catch (const nlohmann::json::exception& e) {
    bad(e.what());
  }
  if (!j.is_object() || !j.contains("parameters") || !j["parameters"].is_array() ||
      !j.contains("covariance") || !j["covariance"].is_array())
    bad("it has no \"parameters\" and \"covariance\"");
  FittedDraws d;
  d.source = file;
  const auto& ps = j["parameters"];
  const auto n = static_cast<Eigen::Index>(ps.size());
  if (n == 0) bad("it has no parameters");
  Eigen::MatrixXd cov(n, n);
  const auto& jc = j["covariance"];
  if (static_cast<Eigen::Index>(jc.size()) != n)
    bad("the covariance is not square in the parameters");
  for (Eigen::Index i = 0; i < n; ++i) {
    const auto& row = jc[static_cast<std::size_t>(i)];
    if (!row.is_array() || static_cast<Eigen::Index>(row.size()) != n)
      bad("the covariance is not square in the parameters");
    for (Eigen::Index k = 0; k < n; ++k) {
      const auto& v = row[static_cast<std::size_t>(k)];
      if (!v.is_number())
        throw InputError({file, 0, 0},
                         fmt::format("the covariance in {} has an infinite or missing entry: "
                                     "the fit could not identify every parameter; fix some and "
                                     "fit again",
                                     file));
      cov(i, k) = v.get<double>();
    }
  }
  for (Eigen::Index i = 0; i < n; ++i) {
    const auto& p = ps[static_cast<std::size_t>(i)];
    if (!p.is_object() || !p.contains("path") || !p["path"].is_string() ||
        !p.contains("estimate") || !p["estimate"].is_number() || !p.contains("scale"))
      bad("a parameter lacks its path, scale or estimate");
    FittedDraws::Param q;
    q.name = p["path"].get<std::string>();
    q.path = table.find(q.name, "--sample-fit");
    q.log = p["scale"] == "log";
    q.estimate = p["estimate"].get<double>();
    if (q.log && !(q.estimate > 0)) bad(q.name + " is on a log scale but not above 0");
    const CaseField& f = table.at(q.path);
    if (f.spec->kind == CaseFieldKind::RateA && p.contains("T_ref") && p["T_ref"].is_number()) {
      const Reaction& rx = c.mechanism.reactions()[static_cast<std::size_t>(f.index)];
      const double t_fit = p["T_ref"].get<double>();
      const double t_case = rx.rate.T_ref.value_or(0);
      if (std::abs(t_case - t_fit) > 1e-9 * t_fit) {
        q.T_ref_fit = t_fit;
        q.T_ref_case = t_case;
        q.Ea = rx.rate.Ea;
        const std::string ea = "reactions." + rx.id + ".rate.Ea";
        for (std::size_t k = 0; k < ps.size(); ++k)
          if (ps[k].contains("path") && ps[k]["path"] == ea) q.ea_param = static_cast<int>(k);
      }
    }
    d.params.push_back(std::move(q));
  }
  const Eigen::LLT<Eigen::MatrixXd> llt(cov);
  if (llt.info() != Eigen::Success)
    throw InputError({file, 0, 0},
                     fmt::format("the covariance in {} is not positive definite: the fit could "
                                 "not tell every parameter apart; fix some and fit again",
                                 file));
  d.L = llt.matrixL();
  return d;
}

Study parse_study(const std::vector<std::string>& vary, const std::vector<std::string>& sample,
                  std::size_t runs, std::uint64_t seed, const CasePathTable& table,
                  const UnitParser& units, std::optional<FittedDraws> fitted) {
  if (vary.empty() && sample.empty() && !fitted)
    fail("--vary", "give --vary PATH=START:STOP:N (a grid) or --sample PATH=DIST (Monte Carlo)");
  if (!vary.empty() && (!sample.empty() || fitted))
    fail("--sample", "--vary and --sample cannot be combined; run a grid or a Monte Carlo study");
  Study s;
  std::set<std::size_t> seen;
  const auto once = [&](std::size_t path, const std::string& option) {
    if (!seen.insert(path).second)
      fail(option, fmt::format("case path \"{}\" is given twice", table.at(path).name));
  };
  if (!vary.empty()) {
    if (runs != 0)
      fail("--runs",
           "--runs applies to --sample (Monte Carlo) only; a grid has "
           "the product of its N points");
    std::size_t m = 1;
    for (const auto& v : vary) {
      s.axes.push_back(parse_axis(v, table, units));
      once(s.axes.back().path, "--vary");
      if (s.axes.back().n > kMaxRuns / m)
        fail("--vary", fmt::format("the grid holds more than {} runs", kMaxRuns));
      m *= s.axes.back().n;
    }
    s.chain = table.has_stirred_tank() ? kGridChainLength : 1;
    return s;
  }
  if (runs < 1) fail("--runs", "--sample needs --runs N (N >= 1 runs)");
  if (runs > kMaxRuns) fail("--runs", fmt::format("at most {} runs", kMaxRuns));
  for (const auto& v : sample) {
    s.samples.push_back(parse_sample(v, table, units));
    once(s.samples.back().path, "--sample");
  }
  if (fitted) {
    for (const auto& p : fitted->params) once(p.path, "--sample-fit");
    s.fitted = std::move(fitted);
  }
  s.runs = runs;
  s.seed = seed;
  return s;
}

Shard Shard::parse(const std::string& text) {
  const auto slash = text.find('/');
  Shard s;
  const auto number = [&](std::string_view t, std::size_t& v) {
    const auto r = std::from_chars(t.data(), t.data() + t.size(), v);
    return r.ec == std::errc() && r.ptr == t.data() + t.size();
  };
  if (slash == std::string::npos || !number(std::string_view(text).substr(0, slash), s.k) ||
      !number(std::string_view(text).substr(slash + 1), s.n) || s.n < 1 || s.k < 1 || s.k > s.n ||
      s.n > kMaxShards)
    fail("--shard", fmt::format("expected K/N with 1 <= K <= N <= {} (e.g. 3/8), got \"{}\"",
                                kMaxShards, text));
  return s;
}

std::pair<std::size_t, std::size_t> Shard::range(std::size_t total) const {
  // total <= kMaxRuns and n <= kMaxShards: the products fit in 64 bits.
  return {total * (k - 1) / n, total * k / n};
}

std::string Shard::to_string() const { return fmt::format("{}/{}", k, n); }

}  // namespace rxtrain::sweep
