// Sizing a heat exchanger from its duty: the log-mean temperature
// difference of counter flow, the area for an overall coefficient U, and a
// utility's flow from its own heat balance (SI: K, W, W/(m2 K), kg/s).
#pragma once

#include <optional>
#include <string>

namespace rxtrain {

struct ExchangerSize {
  double lmtd = 0;                     // K
  double area = 0;                     // m2
  std::optional<double> utility_flow;  // kg/s, with the utility's cp
};

// Counter flow: the process enters where the utility leaves. With
// dT_a = T_process,in - T_utility,out and dT_b = T_process,out -
// T_utility,in (both of one sign: the hot side hotter at both ends),
// LMTD = (dT_a - dT_b) / ln(dT_a / dT_b), dT_a when they are equal.
// Returns nullopt for a temperature cross (the ends of opposite signs, or
// one of them zero), which no counter-flow exchanger can do.
std::optional<double> counterflow_lmtd(double T_process_in, double T_process_out,
                                       double T_utility_in, double T_utility_out);

// Area |duty| / (U LMTD) and, with the utility's cp and T_in != T_out, its
// flow |duty| / (cp |T_out - T_in|). Nullopt for a temperature cross, or
// a utility on the wrong side (not colder than a process it cools, not
// hotter than one it heats).
std::optional<ExchangerSize> size_exchanger(double duty, double U, double T_process_in,
                                            double T_process_out, double T_utility_in,
                                            double T_utility_out, std::optional<double> cp);

}  // namespace rxtrain
