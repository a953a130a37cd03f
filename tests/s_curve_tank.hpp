// An adiabatic stirred tank with up to three steady states, as a case file
// for tests (invented data): pure A at 10 mol/s, v0 = 1e-3 m3/s, so
// tau = V / v0; from 0.1 s to 10 s it spans the region of three states and
// ignition (near tau = 3.5 s). tests/cstr_test.cpp builds the same tank by
// hand and checks its states against GSL.
#pragma once

namespace rxtrain::test {

inline constexpr const char* kSCurveTank = R"(title: S-curve tank (invented data)
phase: liquid
species:
  - {id: A, mw: 0.1 kg/mol, density: 1000 kg/m3, thermo: {cp: 150 J/mol/K}}
  - {id: B, mw: 0.1 kg/mol, density: 1000 kg/m3, thermo: {cp: 150 J/mol/K}}
reactions:
  - id: r1
    equation: A => B
    rate: {A: 1, Ea: 99773.55 J/mol, T_ref: 350 K, orders: {A: 1}}
    dH: -30 kJ/mol
feed: {T: 300 K, P: 2 bar, flows: {A: 10 mol/s}}
key: A
train:
  - {type: cstr, id: R1, volume: 1e-3 m3}
)";

}  // namespace rxtrain::test
