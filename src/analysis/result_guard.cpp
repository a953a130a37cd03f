#include "rxtrain/analysis/result_guard.hpp"

#include <fmt/format.h>

#include <cmath>
#include <optional>
#include <string>
#include <type_traits>
#include <vector>

#include "rxtrain/base/error.hpp"

namespace rxtrain {

namespace {

// Checks values of one owner ("stage R1", "feed"...) and throws on the first
// non-finite one. Labels are built only for that one: a sweep checks every
// profile point of every run, and formatting a label per value cost more
// than the integration.
class Guard {
 public:
  Guard(std::string owner, const std::vector<std::string>& species)
      : owner_(std::move(owner)), species_(species) {}

  // `label` is a string or a callable returning one.
  template <class Label>
  void value(const Label& label, double v) const {
    if (std::isfinite(v)) return;
    if constexpr (std::is_invocable_v<Label>)
      fail(label(), v);
    else
      fail(std::string(label), v);
  }
  template <class Label>
  void value(const Label& label, const std::optional<double>& v) const {
    if (v) value(label, *v);
  }
  template <class Where>
  void flows(const Where& where, const std::vector<double>& F) const {
    for (std::size_t i = 0; i < F.size(); ++i)
      value(
          [&] {
            return fmt::format("{} flow of {}", text(where),
                               i < species_.size() ? species_[i] : "?");
          },
          F[i]);
  }
  void stream(const std::string& where, const Stream& s) const {
    value([&] { return where + " T"; }, s.T);
    value([&] { return where + " P"; }, s.P);
    flows(where, s.F);
  }

 private:
  template <class Where>
  static std::string text(const Where& where) {
    if constexpr (std::is_invocable_v<Where>)
      return where();
    else
      return std::string(where);
  }
  [[noreturn]] void fail(const std::string& field, double v) const {
    throw SolverError(fmt::format(
        "non-finite result: {}, {} = {}; the solver produced no usable number there (check "
        "the units and magnitudes of that stage's inputs, or tighten --rtol)",
        owner_, field, std::isnan(v) ? "NaN" : (v > 0 ? "+Inf" : "-Inf")));
  }

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
    g.value([&] { return fmt::format("profile point {} position V", k + 1); }, p.V);
    const auto at = [&] { return fmt::format("profile point {} (V = {:.6g} m3)", k + 1, p.V); };
    g.value([&] { return at() + " T"; }, p.T);
    g.value([&] { return at() + " X"; }, p.X);
    g.flows(at, p.F);
  }
  for (std::size_t k = 0; k < s.steady_states.size(); ++k) {
    const auto& st = s.steady_states[k];
    const auto at = [&] { return fmt::format("steady state {}", k + 1); };
    g.value([&] { return at() + " T"; }, st.T);
    g.value([&] { return at() + " X"; }, st.X);
    g.flows(at, st.F);
    for (std::size_t e = 0; e < st.eigenvalues.size(); ++e) {
      g.value([&] { return fmt::format("{} eigenvalue {} (real part)", at(), e + 1); },
              st.eigenvalues[e].real());
      g.value([&] { return fmt::format("{} eigenvalue {} (imaginary part)", at(), e + 1); },
              st.eigenvalues[e].imag());
    }
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
