// An adiabatic gas bed whose peak passes T_max, as a case file for tests
// (invented data): A => B, first order in A's concentration, in an inert
// I, every cp constant and cp_A = cp_B (so dH does not vary with T).
// Steady-flow energy balance with constant cp (the standard adiabatic
// relation): T = T0 + lambda X, lambda = -dH F_A0 / sum F_i cp_i
// = 60000 * 10 / (10 * 40 + 40 * 30) = 375 K. From 600 K the bed passes
// T_max = 700 K at X* = 100 / 375; its 0.5 m3 take it to X ~ 0.99.
// tests/limit_check_test.cpp locates that crossing independently.
#pragma once

namespace rxtrain::test {

struct HotBed {
  static constexpr double F_A0 = 10.0, F_I0 = 40.0;  // mol/s
  static constexpr double P = 2e5;                   // Pa
  static constexpr double T0 = 600.0;                // K, feed
  static constexpr double k_ref = 0.5;               // 1/s at T0
  static constexpr double Ea = 80e3;                 // J/mol
  static constexpr double lambda = 375.0;            // K per unit conversion
  static constexpr double T_max = 700.0;             // K, the case's limit
  static constexpr double bulk_density = 800.0;      // kg/m3
};

inline constexpr const char* kHotBed = R"(title: hot adiabatic bed (invented data)
phase: gas
species:
  - {id: A, thermo: {cp: 40 J/mol/K}}
  - {id: B, thermo: {cp: 40 J/mol/K}}
  - {id: I, thermo: {cp: 30 J/mol/K}}
reactions:
  - id: r
    equation: A => B
    rate: {A: 0.5 1/s, Ea: 80000 J/mol, T_ref: 600 K}
    dH: -60000 J/mol
feed: {T: 600 K, P: 200000 Pa, flows: {A: 10 mol/s, I: 40 mol/s}}
key: A
limits: {T_max: 700 K, T_in_min: 550 K}
train:
  - {type: pfr, id: R1, volume: 0.5 m3, bulk_density: 800 kg/m3}
)";

}  // namespace rxtrain::test
