// What every stage reports: plain data, formatted by report/.
// Positions are reactor volume from the stage inlet (m3); catalyst mass at
// a profile point is V * bulk_density where a bulk density is given.
#pragma once

#include <optional>
#include <span>
#include <string>
#include <vector>

#include "rxtrain/case.hpp"
#include "rxtrain/equilibrium.hpp"
#include "rxtrain/solvers/cvode.hpp"
#include "rxtrain/stream.hpp"

namespace rxtrain {

enum class StageKind { Pfr, Cstr, Exchanger };

// The names every output uses: "pfr", "cstr", "exchanger"; "adiabatic",
// "isothermal".
const char* stage_kind_name(StageKind kind);
const char* heat_mode_name(HeatMode heat);

struct ProfilePoint {
  double V = 0;            // m3 from the stage inlet
  double T = 0;            // K
  double X = 0;            // overall key conversion
  std::vector<double> F;   // mol/s
};

// One solution of a stirred tank's balances.
struct SteadyState {
  double T = 0;
  double X = 0;
  std::vector<double> F;
};

struct StageResult {
  std::string id;
  StageKind kind = StageKind::Pfr;
  std::optional<HeatMode> heat;            // reactors only
  bool sized = false;                      // volume found from a target
  Stream inlet;
  Stream outlet;
  std::optional<double> volume;            // m3
  std::optional<double> bulk_density;      // kg/m3
  std::optional<double> catalyst_mass;     // kg
  std::optional<double> space_time;        // s, V / v0 at inlet conditions
  std::optional<double> space_velocity;    // 1/s, 1 / space_time
  std::optional<double> ghsv;              // 1/h, inlet gas at 0 degC, 1 atm
  std::optional<double> whsv;              // 1/h, inlet mass flow / catalyst
  std::optional<double> lhsv;              // 1/h, inlet as liquid / volume
  // Species whose inlet flows WHSV and LHSV are on (every species: the
  // whole stream); empty where they were not computed.
  std::vector<std::string> space_velocity_basis;
  double duty = 0;                         // W, heat added to the stream
  double T_max = 0;                        // K, highest T inside the stage
  double T_min = 0;                        // K, lowest T inside the stage
  double conversion = 0;                   // overall key conversion at outlet
  std::vector<ProfilePoint> profile;       // PFR: every solver step
  std::vector<SteadyState> steady_states;  // CSTR: every solution found
  SolverStats stats;
  std::vector<std::string> warnings;
  // Reactor stages of a mechanism with a reversible reaction: where the
  // stage stands against equilibrium (filled by run_train).
  std::optional<EquilibriumRecord> equilibrium;
};

// Fills space time, space velocity, GHSV, WHSV and LHSV from the stage's
// volume and inlet (each only where it applies). GHSV is on the whole gas;
// WHSV and LHSV on the inlet flows of the `basis` species (indices; empty:
// every species), as Case::space_velocity_basis names them. The stages
// fill them on the whole stream; the train applies the case's basis.
void add_space_velocities(const Mechanism& mech, StageResult& r, std::span<const int> basis = {});

// Volumetric rate multiplier of each reaction in a stage: 1 for per-volume
// rates, the bulk density for per-catalyst rates. Throws InputError when a
// per-catalyst rate meets a stage without a bulk density.
std::vector<double> rate_multipliers(const Mechanism& mech, const ReactorSpec& spec);

}  // namespace rxtrain
