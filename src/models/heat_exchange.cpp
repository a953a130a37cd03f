#include "rxtrain/models/heat_exchange.hpp"

#include <cmath>

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

}  // namespace rxtrain
