#include "rxtrain/models/heat_exchange.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "rxtrain/base/error.hpp"

namespace rxtrain {

std::optional<double> counterflow_lmtd(double T_process_in, double T_process_out,
                                       double T_utility_in, double T_utility_out) {
  const double a = T_process_in - T_utility_out;
  const double b = T_process_out - T_utility_in;
  if (!(a * b > 0)) return std::nullopt;  // a cross, or a pinch of zero
  // Near equal ends the quotient form loses its digits; the limit is the
  // common difference (their mean to within round-off).
  const double r = a / b;
  if (std::abs(r - 1) < 1e-9) return 0.5 * (a + b);
  return std::abs((a - b) / std::log(r));
}

std::optional<ExchangerSize> size_exchanger(double duty, double U, double T_process_in,
                                            double T_process_out, double T_utility_in,
                                            double T_utility_out, std::optional<double> cp) {
  const auto lmtd = counterflow_lmtd(T_process_in, T_process_out, T_utility_in, T_utility_out);
  if (!lmtd) return std::nullopt;
  // The utility must be on the side the duty needs: colder than the process
  // to cool it, hotter to heat it.
  const double hotter_process = T_process_in - T_utility_out;
  if ((duty < 0 && hotter_process < 0) || (duty > 0 && hotter_process > 0)) return std::nullopt;
  ExchangerSize s;
  s.lmtd = *lmtd;
  s.area = std::abs(duty) / (U * *lmtd);
  const double dT = std::abs(T_utility_out - T_utility_in);
  if (cp && dT > 0) s.utility_flow = std::abs(duty) / (*cp * dT);
  return s;
}

double exchanger_effectiveness(FlowArrangement arrangement, double NTU, double Cr) {
  if (arrangement == FlowArrangement::Parallel) return -std::expm1(-NTU * (1 + Cr)) / (1 + Cr);
  // Counter flow, written with expm1 so that Cr near 1 keeps its digits:
  // 1 - Cr e^-a = (1 - Cr) + Cr (1 - e^-a), both terms positive.
  if (1 - Cr <= 0) return NTU / (1 + NTU);
  const double one_minus_e = -std::expm1(-NTU * (1 - Cr));
  return one_minus_e / ((1 - Cr) + Cr * one_minus_e);
}

TwoStreamExchange exchange_heat(FlowArrangement arrangement, double UA, double T_cold_in,
                                double T_hot_in, const std::function<double(double)>& C_cold,
                                const std::function<double(double)>& C_hot) {
  TwoStreamExchange x;
  x.T_cold_out = T_cold_in;
  x.T_hot_out = T_hot_in;
  for (x.iterations = 1; x.iterations <= 100; ++x.iterations) {
    x.C_cold = C_cold(0.5 * (T_cold_in + x.T_cold_out));
    x.C_hot = C_hot(0.5 * (T_hot_in + x.T_hot_out));
    const double C_min = std::min(x.C_cold, x.C_hot), C_max = std::max(x.C_cold, x.C_hot);
    x.NTU = UA / C_min;
    x.effectiveness = exchanger_effectiveness(arrangement, x.NTU, C_min / C_max);
    x.duty = x.effectiveness * C_min * (T_hot_in - T_cold_in);
    const double cold = T_cold_in + x.duty / x.C_cold;
    const double hot = T_hot_in - x.duty / x.C_hot;
    const double moved = std::max(std::abs(cold - x.T_cold_out), std::abs(hot - x.T_hot_out));
    x.T_cold_out = cold;
    x.T_hot_out = hot;
    if (moved <= 1e-10) return x;
  }
  throw SolverError(fmt::format(
      "interchanger: the heat capacities at the sides' mean temperatures did not settle in 100 "
      "passes (cold in {:.6g} K, hot in {:.6g} K)",
      T_cold_in, T_hot_in));
}

}  // namespace rxtrain
