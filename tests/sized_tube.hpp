// A liquid tube sized to a target conversion, as a case file for tests
// (invented data): reversible first order A <=> B with K = 1 (X_eq = 0.5),
// k = 1e-3 1/s, v0 = 1e-4 m3/s, isothermal at 300 K, target X = 0.3. The
// volume to reach X is V = -v0 ln(1 - X / X_eq) / (k (1 + 1/K)).
#pragma once

namespace rxtrain::test {

inline constexpr const char* kSizedTube = R"(title: reversible sized tube (invented data)
phase: liquid
species:
  - {id: A, mw: 0.1 kg/mol, density: 1000 kg/m3}
  - {id: B, mw: 0.1 kg/mol, density: 1000 kg/m3}
reactions:
  - id: r1
    equation: A <=> B
    rate: {A: 1e-3, Ea: 0, orders: {A: 1}}
    dH: 0
    equilibrium: {K: 1, T: 300 K, dH: 0}
feed: {T: 300 K, P: 1 bar, flows: {A: 1 mol/s}}
key: A
train:
  - {type: pfr, id: R1, target: {conversion: 0.3}, heat: isothermal}
)";

}  // namespace rxtrain::test
