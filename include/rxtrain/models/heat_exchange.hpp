// Sizing a heat exchanger from its duty: the log-mean temperature
// difference of counter flow, the area for an overall coefficient U, and a
// utility's flow from its own heat balance (SI: K, W, W/(m2 K), kg/s).
#pragma once

#include <functional>
#include <optional>
#include <string>

#include "rxtrain/case/case.hpp"

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

// Effectiveness of a two-stream exchanger, eps = duty / (C_min (T_hot,in -
// T_cold,in)), from NTU = UA / C_min and Cr = C_min / C_max, 0 <= Cr <= 1
// (Incropera and DeWitt, Fundamentals of Heat and Mass Transfer, ch. 11,
// the effectiveness-NTU relations of Table 11.3):
//   counter:  eps = (1 - exp(-NTU (1 - Cr))) / (1 - Cr exp(-NTU (1 - Cr))),
//             NTU / (1 + NTU) at Cr = 1;
//   parallel: eps = (1 - exp(-NTU (1 + Cr))) / (1 + Cr).
double exchanger_effectiveness(FlowArrangement arrangement, double NTU, double Cr);

// The heat two streams exchange through a constant UA, each side's heat
// capacity flow (W/K, F cp) taken at its mean temperature. The means
// depend on the outlets, so the exchange is iterated from the inlets
// until the outlets move by less than 1e-10 K.
struct TwoStreamExchange {
  double duty = 0;  // W, from the hot side to the cold (negative if the "hot" side is colder)
  double effectiveness = 0, NTU = 0;
  double C_cold = 0, C_hot = 0;          // W/K at each side's mean temperature
  double T_cold_out = 0, T_hot_out = 0;  // K
  int iterations = 0;
};

// `C_cold(T)`, `C_hot(T)`: each side's F cp at T, W/K, positive. Throws
// SolverError when the iteration does not settle in 100 passes.
TwoStreamExchange exchange_heat(FlowArrangement arrangement, double UA, double T_cold_in,
                                double T_hot_in, const std::function<double(double)>& C_cold,
                                const std::function<double(double)>& C_hot);

}  // namespace rxtrain
