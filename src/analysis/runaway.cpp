#include "rxtrain/analysis/runaway.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <functional>
#include <limits>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/solvers/scalar_root.hpp"
#include "rxtrain/stages/run_stage.hpp"

namespace rxtrain {

namespace {

// T_peak at one value, or the reason it could not be had.
struct PeakRun {
  double T = 0;
  std::string error;  // empty: T is the stage's peak
};

using PeakFunction = std::function<PeakRun(double)>;

// The normalized sensitivity at v from its peak T0, by the derivative of
// whole runs: central, or where v - h leaves the field's range (say an
// activity scanned from 0) the three-point one-sided formula, both with
// an error of order h^2.
struct Slope {
  double S = 0, error = 0;
  bool checked = false;
  std::string failure;  // a run of the stencil failed
};

class SensitivityProbe {
 public:
  SensitivityProbe(PeakFunction peak, const CaseField& field, const SensitivityOptions& o,
                   double range)
      : peak_(std::move(peak)), field_(field), o_(o), range_(range) {}

  int runs() const { return runs_; }

  PeakRun peak(double v) {
    ++runs_;
    return peak_(v);
  }

  // S at v (T0 its peak): the difference at step h, then at h/2, h/4, ...
  // until two in a row agree; the last pair's difference is the error.
  Slope slope(double v, double T0) {
    double h = o_.step * range_;
    Slope best;
    best.error = std::numeric_limits<double>::infinity();
    std::optional<double> previous;
    for (int k = 0; k <= o_.max_halvings + 1; ++k, h *= 0.5) {
      std::string failure;
      const std::optional<double> d = derivative(v, T0, h, failure);
      if (!d) {
        best.failure = failure;
        return best;
      }
      const double S = v / T0 * *d;
      if (previous) {
        const double err = std::abs(S - *previous);
        if (err < best.error) {
          best.S = S;
          best.error = err;
        }
        if (err <= o_.rtol * std::abs(S) + o_.atol) {
          best.S = S;
          best.error = err;
          best.checked = true;
          return best;
        }
      }
      previous = S;
    }
    return best;
  }

 private:
  std::optional<double> derivative(double v, double T0, double h, std::string& failure) {
    auto at = [&](double x) -> std::optional<double> {
      const PeakRun r = peak(x);
      if (!r.error.empty()) {
        failure = r.error;
        return std::nullopt;
      }
      return r.T;
    };
    const bool down = field_.contains(v - h), up = field_.contains(v + h);
    if (down && up) {
      const auto a = at(v - h), b = at(v + h);
      if (!a || !b) return std::nullopt;
      return (*b - *a) / (2 * h);
    }
    const double s = up ? 1.0 : -1.0;
    if (!field_.contains(v + 2 * s * h)) {
      failure = fmt::format("{} cannot move by {:g} from {:g}", field_.name, h, v);
      return std::nullopt;
    }
    const auto a = at(v + s * h), b = at(v + 2 * s * h);
    if (!a || !b) return std::nullopt;
    return s * (-3 * T0 + 4 * *a - *b) / (2 * h);
  }

  PeakFunction peak_;
  CaseField field_;
  const SensitivityOptions& o_;
  double range_;
  int runs_ = 0;
};

std::string run_error(const std::exception& e) { return e.what(); }

// The highest temperature of the last stage of `work`'s train at field
// value v.
class TrainPeak {
 public:
  TrainPeak(const Case& c, const CaseField& field, std::size_t index, const SolverOptions& s)
      : work_(c), field_(field) {
    work_.train.resize(index + 1);
    work_.target_conversion.reset();
    work_.target_outlet.reset();
    options_.solvers = s;
    options_.equilibrium_views = false;
  }
  PeakRun operator()(double v) {
    const std::vector<CaseField> f{field_};
    const std::vector<double> x{v};
    try {
      set_case_fields(work_, f, x);
      return {run_train(work_, options_, ws_).stages.back().T_max, {}};
    } catch (const SolverError& e) {
      return {0, run_error(e)};
    } catch (const InputError& e) {
      return {0, run_error(e)};
    }
  }

 private:
  Case work_;
  CaseField field_;
  TrainOptions options_;
  TrainWorkspace ws_;
};

void set_critical(const Case& c, const CaseField& field, CriticalValue& k) {
  k.margin = k.value - field.get(c);
  k.beyond = k.S > 0 ? k.margin < 0 : k.margin > 0;
}

}  // namespace

SensitivityScan sensitivity_scan(const Case& c, const CaseField& field, std::size_t index,
                                 double lo, double hi, const SensitivityOptions& o,
                                 const SolverOptions& solvers, std::vector<std::string>& warnings) {
  SensitivityScan out;
  const int n = std::max(o.points, 3);
  TrainPeak train_peak(c, field, index, solvers);
  SensitivityProbe probe(std::ref(train_peak), field, o, hi - lo);
  std::vector<std::string> failed;
  int unchecked = 0;
  double worst = 0;
  for (int k = 0; k < n; ++k) {
    const double v = k == n - 1 ? hi : lo + (hi - lo) * k / (n - 1);
    const PeakRun r = probe.peak(v);
    if (!r.error.empty()) {
      failed.push_back(fmt::format("{:.6g} {}: {}", v, field.unit.to_string(), r.error));
      continue;
    }
    const Slope s = probe.slope(v, r.T);
    if (!s.failure.empty()) {
      failed.push_back(fmt::format("{:.6g} {}: {}", v, field.unit.to_string(), s.failure));
      continue;
    }
    out.points.push_back({v, r.T, s.S, s.error, s.checked});
    if (!s.checked) {
      ++unchecked;
      worst = std::max(worst, s.error);
    }
  }
  const std::string unit = field.unit.to_string();
  if (!failed.empty())
    warnings.push_back(fmt::format(
        "{} of {} points left out: the stage could not be run there or beside them (first at {} "
        "= {})",
        failed.size(), n, field.name, failed.front()));
  if (unchecked > 0)
    warnings.push_back(fmt::format(
        "at {} point(s) the sensitivity's central differences at the step and at half of it "
        "never agreed within {:g} relative (+{:g}) after {} halvings; the largest disagreement "
        "left is {:.3g}",
        unchecked, o.rtol, o.atol, o.max_halvings, worst));
  out.runs = probe.runs();
  if (out.points.empty())
    throw SolverError(fmt::format("no point of the sensitivity scan of {} could be run ({})",
                                  field.name, failed.empty() ? "" : failed.front()));

  // The grid's largest |S|; refined where it stands between two points.
  std::size_t top = 0;
  for (std::size_t k = 1; k < out.points.size(); ++k)
    if (std::abs(out.points[k].S) > std::abs(out.points[top].S)) top = k;
  const SensitivityPoint& p = out.points[top];
  if (p.S == 0) {
    warnings.push_back(
        fmt::format("the peak temperature does not move with {} over the range: no critical value",
                    field.name));
    return out;
  }
  if (top == 0 || top + 1 == out.points.size()) {
    warnings.push_back(fmt::format(
        "|S| is largest at the {} end of the range ({} = {:.6g} {}): the critical value lies "
        "beyond it, or S has no peak; widen the range",
        top == 0 ? "lower" : "upper", field.name, p.value, unit));
    return out;
  }
  CriticalValue best{p.value, p.T_peak, p.S, 0, false};
  auto minus_abs_S = [&](double v) {
    const PeakRun r = probe.peak(v);
    if (!r.error.empty()) return 0.0;  // the minimizer keeps away from it
    const Slope s = probe.slope(v, r.T);
    if (!s.failure.empty()) return 0.0;
    if (std::abs(s.S) > std::abs(best.S)) best = CriticalValue{v, r.T, s.S, 0, false};
    return -std::abs(s.S);
  };
  (void)brent_minimize(minus_abs_S, out.points[top - 1].value, out.points[top + 1].value,
                       o.critical_tol * (hi - lo), 100);
  set_critical(c, field, best);
  double least = std::abs(best.S);
  for (const auto& q : out.points) least = std::min(least, std::abs(q.S));
  best.pronounced = std::abs(best.S) >= kRunawayPeakProminence * least;
  out.critical = best;
  out.runs = probe.runs();
  return out;
}

namespace {

// A bed's peak at a value of the check's parameter: the stage alone on
// the inlet it ran with.
struct BedCheck {
  const char* what;  // the parameter in words
  std::string path;  // its case field, for `rxtrain stability`
  double design = 0;
};

BedCheck bed_check(const ReactorSpec& spec, const Stream& inlet, std::size_t k) {
  if (spec.cooling) {
    const bool flowing = spec.cooling->direction != CoolantFlow::Constant;
    return {flowing ? "coolant inlet temperature" : "coolant temperature",
            fmt::format("train.{}.heat.coolant.{}", spec.id, flowing ? "T_in" : "T"),
            spec.cooling->T};
  }
  return {"inlet temperature", k == 0 ? "feed.T" : "", inlet.T};
}

// Half the margin between the check's runs (common practice, no source:
// the S peak of a bed near runaway spans a few kelvin, and four points a
// side of the case's value reach twice the margin, so that a peak within
// the margin has a point beyond it on each side).
constexpr int kHalfSteps = 4;

}  // namespace

std::vector<std::string> runaway_warnings(const Case& c, const TrainResult& result, double margin,
                                          const SolverOptions& solvers) {
  std::vector<std::string> out;
  if (!(margin > 0)) return out;
  std::optional<TrainWorkspace> ws;
  const PfrOptions& pfr_options = solvers.tube;
  const CstrOptions cstr_options = solvers.tank();
  for (std::size_t k = 0; k < result.stages.size() && k < c.train.size(); ++k) {
    const StageResult& r = result.stages[k];
    if (r.kind != StageKind::Pfr || !r.heat || *r.heat == HeatMode::Isothermal || !r.volume)
      continue;
    const auto* given = std::get_if<ReactorSpec>(&c.train[k]);
    if (!given) continue;
    // The bed as it ran: a sized one at the volume found.
    ReactorSpec spec = *given;
    spec.volume = *r.volume;
    spec.catalyst_mass.reset();
    spec.target_conversion.reset();
    spec.target_outlet.reset();
    const BedCheck check = bed_check(spec, r.inlet, k);
    if (!ws) ws.emplace();
    const ConversionBasis basis{c.key, r.F_key_fed};
    const StageContext ctx{c.mechanism, basis, ws->pfr(), ws->cstr(), pfr_options, cstr_options};
    const double h = margin / 2;
    std::vector<double> v(2 * kHalfSteps + 1), T(v.size());
    try {
      for (int j = -kHalfSteps; j <= kHalfSteps; ++j) {
        const std::size_t i = static_cast<std::size_t>(j + kHalfSteps);
        v[i] = check.design + j * h;
        if (j == 0) {
          T[i] = r.T_max;  // the case itself, as the train ran it
          continue;
        }
        ReactorSpec s = spec;
        Stream inlet = r.inlet;
        if (s.cooling)
          s.cooling->T = v[i];
        else
          inlet.T = v[i];
        if (!(v[i] > 0)) throw SolverError(fmt::format("{:g} K is not a temperature", v[i]));
        T[i] = run_stage(s, inlet, ctx).T_max;
      }
    } catch (const std::exception& e) {
      out.push_back(
          fmt::format("stage {}: its runaway margin within {:g} K of the {} was not "
                      "checked ({})",
                      r.id, margin, check.what, e.what()));
      continue;
    }
    // S at the inner points, by central differences of neighbours.
    std::vector<double> S(v.size(), 0.0);
    std::size_t top = 1;
    for (std::size_t i = 1; i + 1 < v.size(); ++i) {
      S[i] = v[i] / T[i] * (T[i + 1] - T[i - 1]) / (2 * h);
      if (std::abs(S[i]) > std::abs(S[top])) top = i;
    }
    // A peak of |S| between two lower neighbours; the parabola through the
    // three places it.
    double least = std::abs(S[1]);
    for (std::size_t i = 1; i + 1 < v.size(); ++i) least = std::min(least, std::abs(S[i]));
    if (top == 1 || top + 2 == v.size() || S[top] == 0 ||
        std::abs(S[top]) < kRunawayPeakProminence * least)
      continue;
    const double a = std::abs(S[top - 1]), b = std::abs(S[top]), d = std::abs(S[top + 1]);
    const double curvature = a - 2 * b + d;
    const double shift = curvature < 0 ? 0.5 * (a - d) / curvature : 0.0;
    const double critical = v[top] + std::clamp(shift, -1.0, 1.0) * h;
    const double m = critical - check.design;
    if (std::abs(m) > margin) continue;
    const bool beyond = S[top] > 0 ? m < 0 : m > 0;
    out.push_back(fmt::format(
        "stage {}: the {} at which its peak temperature runs away (where the peak's normalized "
        "sensitivity to it peaks, S = {:.3g}; Morbidelli and Varma 1982) is about {:.1f} °C, "
        "{:.1f} K {} the case's {:.2f} °C: the design {} within {:g} K of runaway{}",
        r.id, check.what, S[top], critical - kZeroCelsius, std::abs(m), m > 0 ? "above" : "below",
        check.design - kZeroCelsius, beyond ? "stands past it," : "sits", margin,
        check.path.empty() ? std::string()
        : given->sized()
            ? fmt::format(" (rxtrain stability scans a bed of given size: give {} its volume "
                          "and scan {})",
                          r.id, check.path)
            : fmt::format(" (rxtrain stability --stage {} --param {}=FROM:TO scans it)", r.id,
                          check.path)));
  }
  return out;
}

}  // namespace rxtrain
