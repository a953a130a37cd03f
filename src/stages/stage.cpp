#include "rxtrain/stages/stage.hpp"

#include <fmt/format.h>

namespace rxtrain {

namespace {
// Normal conditions for GHSV: 0 degC and 1 atm (common practice; the basis
// is stated in every report).
constexpr double kNormalT = 273.15;    // K
constexpr double kNormalP = 101325.0;  // Pa (1 atm, NIST SP 811)
constexpr double kSecondsPerHour = 3600.0;
}  // namespace

const char* stage_kind_name(StageKind kind) {
  switch (kind) {
    case StageKind::Pfr:
      return "pfr";
    case StageKind::Cstr:
      return "cstr";
    case StageKind::Exchanger:
      return "exchanger";
  }
  return "?";
}

const char* heat_mode_name(HeatMode heat) {
  return heat == HeatMode::Adiabatic ? "adiabatic" : "isothermal";
}

void add_space_velocities(const Mechanism& mech, StageResult& r, std::span<const int> basis) {
  if (!r.volume || *r.volume <= 0) return;
  const double V = *r.volume;
  const double* F = r.inlet.F.data();
  const double v0 = mech.volumetric_flow(r.inlet.T, r.inlet.P, F);
  r.space_time = V / v0;
  r.space_velocity = v0 / V;
  if (mech.phase() == Phase::Gas) {
    const double Ft = r.inlet.total_flow();
    r.ghsv = Ft * kGasConstant * kNormalT / kNormalP * kSecondsPerHour / V;
  }
  // WHSV and LHSV on the basis species' flows at the stage inlet; each
  // needs every basis species' molar mass (and density, for LHSV).
  std::vector<int> all;
  if (basis.empty()) {
    all.resize(static_cast<std::size_t>(mech.n_species()));
    for (int i = 0; i < mech.n_species(); ++i) all[static_cast<std::size_t>(i)] = i;
    basis = all;
  }
  r.space_velocity_basis.clear();
  double mass = 0, liquid = 0;
  bool all_mw = true, all_density = true;
  for (int i : basis) {
    const Species& s = mech.species()[static_cast<std::size_t>(i)];
    r.space_velocity_basis.push_back(s.id);
    all_mw = all_mw && s.mw.has_value();
    all_density = all_density && s.density.has_value();
    if (s.mw) mass += F[i] * *s.mw;
    if (s.mw && s.density) liquid += F[i] * *s.mw / *s.density;
  }
  r.whsv.reset();
  r.lhsv.reset();
  if (all_mw && r.catalyst_mass && *r.catalyst_mass > 0)
    r.whsv = mass * kSecondsPerHour / *r.catalyst_mass;
  if (all_mw && all_density) r.lhsv = liquid * kSecondsPerHour / V;
}

std::vector<double> rate_multipliers(const Mechanism& mech, const ReactorSpec& spec) {
  std::vector<double> m;
  for (const auto& rx : mech.reactions()) {
    if (rx.rate.basis == RateBasis::Catalyst) {
      if (!spec.bulk_density)
        throw InputError(spec.where,
                         fmt::format("stage {}: reaction {} has a per-catalyst rate; give the "
                                     "stage a bulk_density (e.g. bulk_density: 750 kg/m3)",
                                     spec.id, rx.id));
      m.push_back(*spec.bulk_density);
    } else {
      m.push_back(1.0);
    }
  }
  return m;
}

}  // namespace rxtrain
