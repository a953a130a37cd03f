#include "rxtrain/result_guard.hpp"

#include <fmt/format.h>

#include <cmath>
#include <optional>
#include <string>
#include <vector>

#include "rxtrain/error.hpp"

namespace rxtrain {

namespace {

// Checks values of one owner ("stage R1", "feed"...) and throws on the first
// non-finite one.
class Guard {
 public:
  Guard(std::string owner, const std::vector<std::string>& species)
      : owner_(std::move(owner)), species_(species) {}

  void value(const std::string& field, double v) const {
    if (std::isfinite(v)) return;
    throw SolverError(fmt::format(
        "non-finite result: {}, {} = {}; the solver produced no usable number there (check "
        "the units and magnitudes of that stage's inputs, or tighten --rtol)",
        owner_, field, std::isnan(v) ? "NaN" : (v > 0 ? "+Inf" : "-Inf")));
  }
  void value(const std::string& field, const std::optional<double>& v) const {
    if (v) value(field, *v);
  }
  void flows(const std::string& where, const std::vector<double>& F) const {
    for (std::size_t i = 0; i < F.size(); ++i)
      value(fmt::format("{} flow of {}", where, i < species_.size() ? species_[i] : "?"), F[i]);
  }
  void stream(const std::string& where, const Stream& s) const {
    value(where + " T", s.T);
    value(where + " P", s.P);
    flows(where, s.F);
  }

 private:
  std::string owner_;
  const std::vector<std::string>& species_;
};

void check_stage(const StageResult& s, const std::vector<std::string>& species) {
  const Guard g("stage " + s.id, species);
  g.stream("inlet", s.inlet);
  g.stream("outlet", s.outlet);
  g.value("volume", s.volume);
  g.value("bulk_density", s.bulk_density);
  g.value("catalyst mass", s.catalyst_mass);
  g.value("space time", s.space_time);
  g.value("space velocity", s.space_velocity);
  g.value("GHSV", s.ghsv);
  g.value("WHSV", s.whsv);
  g.value("LHSV", s.lhsv);
  g.value("duty", s.duty);
  g.value("T_max", s.T_max);
  g.value("T_min", s.T_min);
  g.value("conversion", s.conversion);
  for (std::size_t k = 0; k < s.profile.size(); ++k) {
    const auto& p = s.profile[k];
    g.value(fmt::format("profile point {} position V", k + 1), p.V);
    const std::string at = fmt::format("profile point {} (V = {:.6g} m3)", k + 1, p.V);
    g.value(at + " T", p.T);
    g.value(at + " X", p.X);
    g.flows(at, p.F);
  }
  for (std::size_t k = 0; k < s.steady_states.size(); ++k) {
    const auto& st = s.steady_states[k];
    const std::string at = fmt::format("steady state {}", k + 1);
    g.value(at + " T", st.T);
    g.value(at + " X", st.X);
    g.flows(at, st.F);
  }
  if (const auto& e = s.equilibrium) {
    g.value("equilibrium X_ad_eq", e->X_ad_eq);
    g.value("equilibrium T_ad_eq", e->T_ad_eq);
    g.value("equilibrium X_eq_out", e->X_eq_out);
    g.value("equilibrium approach_X", e->approach_X);
    g.value("equilibrium approach_T", e->approach_T);
  }
}

}  // namespace

void check_finite(const TrainResult& result) {
  Guard("feed", result.species).stream("feed", result.feed);
  for (const auto& s : result.stages) check_stage(s, result.species);
  const Guard out("train outlet", result.species);
  out.stream("outlet", result.outlet);
  out.value("conversion", result.conversion);
}

}  // namespace rxtrain
