#include "rxtrain/stages/exchanger.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/models/energy_balance.hpp"
#include "rxtrain/models/heat_exchange.hpp"

namespace rxtrain {

StageResult run_exchanger(const Mechanism& mech, const ExchangerSpec& spec, const Stream& inlet,
                          const ConversionBasis& basis) {
  if (spec.T_out.has_value() == spec.duty.has_value())
    throw InputError(spec.where, fmt::format("stage {}: an exchanger needs exactly one of T_out "
                                             "(e.g. T_out: 350 degC) and duty (e.g. duty: -2 MW)",
                                             spec.id));
  const double H_in = mech.sensible_enthalpy_flow(inlet.T, inlet.F.data());
  double T_out = 0, duty = 0;
  if (spec.T_out) {
    if (!(*spec.T_out > 0) || !std::isfinite(*spec.T_out))
      throw InputError(spec.where, fmt::format("stage {}: T_out must be above 0 K", spec.id));
    T_out = *spec.T_out;
    // Summed per species as differences, so a small temperature change keeps
    // its relative accuracy.
    for (int i = 0; i < mech.n_species(); ++i) {
      const auto& th = mech.species()[i].thermo;
      duty += inlet.F[i] * (th.h_sensible(T_out) - th.h_sensible(inlet.T));
    }
  } else {
    if (!std::isfinite(*spec.duty))
      throw InputError(spec.where, fmt::format("stage {}: duty must be a finite number", spec.id));
    duty = *spec.duty;
    try {
      T_out = temperature_for_enthalpy(mech, inlet.F, H_in + duty, inlet.T);
    } catch (const SolverError& e) {
      throw SolverError(fmt::format("{}: duty {:.6g} W: {}", spec.id, duty, e.what()));
    }
  }

  StageResult res;
  res.id = spec.id;
  res.kind = StageKind::Exchanger;
  res.inlet = inlet;
  res.outlet = Stream{T_out, inlet.P, inlet.F};
  res.duty = duty;
  res.T_max = std::max(inlet.T, T_out);
  res.T_min = std::min(inlet.T, T_out);
  res.conversion = basis.conversion(inlet);
  res.profile.push_back(ProfilePoint{0.0, inlet.T, res.conversion, inlet.F, {}});
  res.profile.push_back(ProfilePoint{0.0, T_out, res.conversion, inlet.F, {}});
  res.stats.message = spec.T_out ? "outlet temperature given; duty from the enthalpy balance"
                                 : "duty given; outlet temperature from the enthalpy balance";
  if (spec.U && spec.utility) {
    const UtilitySpec& u = *spec.utility;
    res.utility = u;
    res.exchanger_size = size_exchanger(duty, *spec.U, inlet.T, T_out, u.T_in, u.T_out, u.cp);
    if (!res.exchanger_size)
      throw InputError(
          spec.where,
          fmt::format("stage {}: temperature cross: the process goes from {} to {} ({} the "
                      "stream) and the utility from {} to {}; in counter flow the utility must "
                      "stay {} than the process at both ends (process in against utility out, "
                      "process out against utility in)",
                      spec.id, temperature_words(inlet.T), temperature_words(T_out),
                      duty < 0 ? "cooling" : "heating", temperature_words(u.T_in),
                      temperature_words(u.T_out), duty < 0 ? "colder" : "hotter"));
  }
  return res;
}

}  // namespace rxtrain
