#include "rxtrain/stages/limit_check.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace rxtrain {

namespace {

constexpr double kZeroCelsius = 273.15;  // K

std::string celsius(double T) { return fmt::format("{:.2f} °C", T - kZeroCelsius); }

// A temperature difference; below the display step it says so rather than
// "0.00 K".
std::string kelvin(double dT) {
  return dT < 0.005 ? std::string("less than 0.01 K") : fmt::format("{:.2f} K", dT);
}

// V where the profile first goes beyond `limit` (above it for T_max, below
// for T_in_min), linear in V between the points around the crossing;
// 0 when the first point (the inlet) is already beyond it.
std::optional<double> first_crossing(const std::vector<ProfilePoint>& p, double limit, bool above) {
  const auto beyond = [&](double T) { return above ? T > limit : T < limit; };
  for (std::size_t k = 0; k < p.size(); ++k) {
    if (!beyond(p[k].T)) continue;
    if (k == 0) return 0.0;
    const ProfilePoint &a = p[k - 1], &b = p[k];
    const double w = (limit - a.T) / (b.T - a.T);  // b.T != a.T: one is beyond, one not
    return a.V + std::clamp(w, 0.0, 1.0) * (b.V - a.V);
  }
  return std::nullopt;
}

// The Over or Under finding of stage `r` against `limit`, if it passes it.
std::optional<LimitFinding> passing(const StageResult& r, LimitBound bound, double limit,
                                    const LimitCheckOptions& o) {
  const bool above = bound == LimitBound::TMax;
  const double T = above ? r.T_max : r.T_min;
  const double by = above ? T - limit : limit - T;
  if (!(by > kLimitRelativeTolerance * limit)) return std::nullopt;
  LimitFinding f;
  f.stage = r.id;
  f.kind = above ? LimitFindingKind::Over : LimitFindingKind::Under;
  f.bound = bound;
  f.limit = limit;
  f.T = T;
  f.T_in = r.inlet.T;
  f.by = by;
  f.at_inlet = above ? r.inlet.T > limit : r.inlet.T < limit;
  f.tank = r.kind == StageKind::Cstr;
  if (f.at_inlet)
    f.V = 0.0;
  else if (!f.tank && o.locate)
    f.V = first_crossing(r.profile, limit, above);
  if (f.V && r.bulk_density) f.catalyst_mass = *f.V * *r.bulk_density;
  return f;
}

}  // namespace

const char* limit_finding_kind_name(LimitFindingKind kind) {
  switch (kind) {
    case LimitFindingKind::Over:
      return "over";
    case LimitFindingKind::Under:
      return "under";
    case LimitFindingKind::Near:
      return "near";
  }
  return "?";
}

const char* limit_bound_name(LimitBound bound) {
  return bound == LimitBound::TMax ? "T_max" : "T_in_min";
}

std::string LimitCheckOptions::validate() const {
  if (!(margin >= 0) || !std::isfinite(margin))
    return fmt::format("margin must be a finite temperature difference of 0 K or more, got {:g}",
                       margin);
  return {};
}

bool LimitCheck::passed() const {
  return std::any_of(findings.begin(), findings.end(),
                     [](const LimitFinding& f) { return f.kind != LimitFindingKind::Near; });
}

double LimitCheck::past(const std::string& stage) const {
  double most = 0;
  for (const auto& f : findings)
    if (f.stage == stage && f.kind != LimitFindingKind::Near) most = std::max(most, f.by);
  return most;
}

LimitCheck check_temperature_limits(const TemperatureLimits& limits,
                                    std::span<const StageResult> stages,
                                    const LimitCheckOptions& options) {
  if (auto e = options.validate(); !e.empty())
    throw std::invalid_argument("LimitCheckOptions: " + e);
  LimitCheck out;
  out.T_max = limits.T_max;
  out.T_in_min = limits.T_in_min;
  out.margin = options.margin;
  for (const StageResult& r : stages) {
    if (!is_reactor(r.kind)) continue;
    const std::size_t first = out.findings.size();
    if (limits.T_max)
      if (auto f = passing(r, LimitBound::TMax, *limits.T_max, options))
        out.findings.push_back(std::move(*f));
    if (limits.T_in_min)
      if (auto f = passing(r, LimitBound::TInMin, *limits.T_in_min, options))
        out.findings.push_back(std::move(*f));
    if (out.findings.size() > first) continue;  // a stage past a limit needs no note
    auto near = [&](LimitBound bound, double limit, double T) {
      LimitFinding f;
      f.stage = r.id;
      f.kind = LimitFindingKind::Near;
      f.bound = bound;
      f.limit = limit;
      f.T = T;
      f.T_in = r.inlet.T;
      f.by = std::max(0.0, bound == LimitBound::TMax ? limit - T : T - limit);
      f.tank = r.kind == StageKind::Cstr;
      if (f.by <= options.margin) out.findings.push_back(std::move(f));
    };
    if (limits.T_max) near(LimitBound::TMax, *limits.T_max, r.T_max);
    if (limits.T_in_min && r.T_min < r.inlet.T) near(LimitBound::TInMin, *limits.T_in_min, r.T_min);
  }
  return out;
}

std::string limit_finding_text(const LimitFinding& f, double margin) {
  const bool hot = f.bound == LimitBound::TMax;
  const char* name = hot ? "T_max" : "T_in_min";
  const std::string limit = fmt::format("{} = {}", name, celsius(f.limit));
  if (f.kind == LimitFindingKind::Near) {
    if (f.by < 0.005)
      return fmt::format("stage {} {} {} (no margin left)", f.stage, hot ? "peaks at" : "cools to",
                         limit);
    return fmt::format("stage {} {} {}, {} {} {} (within the {:g} K margin)", f.stage,
                       hot ? "peaks at" : "cools to", celsius(f.T), kelvin(f.by),
                       hot ? "below" : "above", limit, margin);
  }
  const char* side = hot ? "above" : "below";
  if (f.tank)
    return fmt::format("stage {} (a stirred tank) runs at {}, {} {} {}", f.stage, celsius(f.T),
                       kelvin(f.by), side, limit);
  const std::string extreme = hot ? "peak" : "lowest point";
  if (f.at_inlet && f.T == f.T_in)
    return fmt::format("stage {} is fed at {}, {} {} {}", f.stage, celsius(f.T_in), kelvin(f.by),
                       side, hot ? limit : "the lowest useful inlet temperature " + limit);
  if (f.at_inlet)
    return fmt::format("stage {} is fed at {}, {} {}; its {}, {}, is {} {} it", f.stage,
                       celsius(f.T_in), side, limit, extreme, celsius(f.T), kelvin(f.by), side);
  std::string s = fmt::format("stage {} {} {}: its {}, {}, is {} {} {}", f.stage,
                              hot ? "passes" : "falls below", name, extreme, celsius(f.T),
                              kelvin(f.by), side, limit);
  if (f.V) {
    s += fmt::format("; it first {} {} at V = {:.4g} m3", hot ? "reaches" : "falls to", name, *f.V);
    if (f.catalyst_mass) s += fmt::format(" ({:.4g} kg of catalyst)", *f.catalyst_mass);
    s += " from its inlet";
  }
  return s;
}

}  // namespace rxtrain
