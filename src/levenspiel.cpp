#include "rxtrain/levenspiel.hpp"

#include <cmath>

namespace rxtrain {

namespace {

// -r_key per unit of the curve's basis at one state.
double key_consumption(const Mechanism& mech, int key, const StageResult& s, bool catalyst_basis,
                       double T, const std::vector<double>& F, std::vector<double>& r) {
  mech.rates(T, s.inlet.P, F.data(), r.data());
  double c = 0;
  for (int j = 0; j < mech.n_reactions(); ++j) {
    const auto& rx = mech.reactions()[j];
    // Each rate in the curve's basis: per-catalyst rates scale by the bulk
    // density to a volume basis, per-volume rates by its inverse to a
    // catalyst basis.
    double beta = 1.0;
    if (catalyst_basis && rx.rate.basis == RateBasis::Volume) beta = 1.0 / *s.bulk_density;
    if (!catalyst_basis && rx.rate.basis == RateBasis::Catalyst) beta = s.bulk_density.value_or(0);
    c -= rx.nu[key] * beta * r[j];
  }
  return c;
}

}  // namespace

std::vector<LevenspielCurve> levenspiel_curves(const Mechanism& mech, int key, double F_key_feed,
                                               const std::vector<StageResult>& stages) {
  bool all_catalyst = mech.n_reactions() > 0;
  for (const auto& rx : mech.reactions())
    all_catalyst = all_catalyst && rx.rate.basis == RateBasis::Catalyst;
  std::vector<double> r(mech.n_reactions());
  std::vector<LevenspielCurve> out;
  for (const auto& s : stages) {
    if (s.kind == StageKind::Exchanger) continue;
    LevenspielCurve c;
    c.stage = s.id;
    c.catalyst_basis = all_catalyst && s.bulk_density.has_value();
    c.rectangle = s.kind == StageKind::Cstr;
    c.X_in = s.profile.empty() ? 0 : s.profile.front().X;
    c.X_out = s.conversion;
    auto point = [&](double X, double T, const std::vector<double>& F) {
      const double rate = key_consumption(mech, key, s, c.catalyst_basis, T, F, r);
      if (rate > 0 && std::isfinite(rate)) c.points.push_back({X, F_key_feed / rate});
    };
    if (c.rectangle) {
      point(s.conversion, s.outlet.T, s.outlet.F);
      if (!c.points.empty()) c.area = c.points.back().inverse_rate * (c.X_out - c.X_in);
    } else {
      for (const auto& p : s.profile) point(p.X, p.T, p.F);
      for (std::size_t i = 1; i < c.points.size(); ++i)
        c.area += 0.5 * (c.points[i].inverse_rate + c.points[i - 1].inverse_rate) *
                  (c.points[i].X - c.points[i - 1].X);
    }
    out.push_back(std::move(c));
  }
  return out;
}

}  // namespace rxtrain
