#include "rxtrain/stages/quench.hpp"

#include <fmt/format.h>

#include <algorithm>

#include "rxtrain/base/error.hpp"
#include "rxtrain/models/energy_balance.hpp"

namespace rxtrain {

Stream quench_side_stream(const QuenchSpec& spec, const Stream& feed) {
  if (spec.stream) return *spec.stream;
  Stream s = feed;
  for (auto& f : s.F) f *= spec.share.value();
  if (spec.T) s.T = *spec.T;
  return s;
}

StageResult run_quench(const Mechanism& mech, const QuenchSpec& spec, const Stream& inlet,
                       const Stream& side, const ConversionBasis& basis_before,
                       const ConversionBasis& basis_after) {
  StageResult res;
  res.id = spec.id;
  res.kind = StageKind::Quench;
  res.inlet = inlet;
  try {
    res.outlet = mix_adiabatic(mech, inlet, side);
  } catch (const SolverError& e) {
    throw SolverError(fmt::format("{}: mixing the side stream: {}", spec.id, e.what()));
  }
  res.side_stream = side;
  res.share = spec.share;
  res.T_max = std::max({inlet.T, side.T, res.outlet.T});
  res.T_min = std::min({inlet.T, side.T, res.outlet.T});
  res.conversion = basis_after.conversion(res.outlet);
  // The mixing line on the temperature-conversion diagram: from the
  // arriving stream to the mixed one.
  res.profile.push_back(ProfilePoint{0.0, inlet.T, basis_before.conversion(inlet), inlet.F, {}});
  res.profile.push_back(ProfilePoint{0.0, res.outlet.T, res.conversion, res.outlet.F, {}});
  res.stats.message = "adiabatic mixing by enthalpy";
  return res;
}

}  // namespace rxtrain
