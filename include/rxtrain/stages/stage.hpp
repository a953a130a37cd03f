// What every stage reports: plain data, formatted by report/.
// Positions are reactor volume from the stage inlet (m3); catalyst mass at
// a profile point is V * bulk_density where a bulk density is given.
#pragma once

#include <complex>
#include <limits>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/chem/stream.hpp"
#include "rxtrain/models/energy_balance.hpp"
#include "rxtrain/models/equilibrium.hpp"
#include "rxtrain/models/heat_exchange.hpp"
#include "rxtrain/models/tank_stability.hpp"
#include "rxtrain/solvers/cvode.hpp"

namespace rxtrain {

enum class StageKind { Pfr, Cstr, Exchanger, Quench, Interchanger };

// Tubular reactors and stirred tanks: the stages with a volume, catalyst
// and a path; exchangers and quenches only change the stream's state.
inline bool is_reactor(StageKind k) { return k == StageKind::Pfr || k == StageKind::Cstr; }

// The names every output uses: "pfr", "cstr", "exchanger", "quench",
// "interchanger"; "adiabatic",
// "isothermal".
const char* stage_kind_name(StageKind kind);
const char* heat_mode_name(HeatMode heat);

struct ProfilePoint {
  double V = 0;           // m3 from the stage inlet
  double T = 0;           // K
  double X = 0;           // overall key conversion
  std::vector<double> F;  // mol/s
  // Effectiveness factor of each reaction at this point (catalyst pellets
  // with D_eff; empty without).
  std::vector<double> eta;
  // Pa, the local pressure of a bed with a pressure drop; empty where the
  // stage runs at constant pressure (its inlet's).
  std::optional<double> P = std::nullopt;
  // K, the coolant's temperature here (cooled tubular stages); empty else.
  std::optional<double> T_coolant = std::nullopt;
};

struct StageResult;

// The coolant of a cooled tubular stage as it ran. T_in and T_out are in
// the coolant's own flow direction (both the coolant's T when constant).
struct CoolantResult {
  double T_in = 0, T_out = 0;  // K
  // W, the heat added to the process stream through the walls (negative
  // when it is cooled, as an exchanger's duty).
  double duty = 0;
  CoolantFlow direction = CoolantFlow::Constant;
  double U = 0;         // W/(m2 K)
  double area = 0;      // m2, the tubes' inner surface
  double dT_max = 0;    // K, the largest process-minus-coolant difference
  double V_dT_max = 0;  // m3 from the stage inlet, where it stands
  // Countercurrent: the coolant's outlet found by shooting (its value at
  // the process inlet) and how many trials it took.
  int shooting_trials = 0;
};

// The peak process temperature of a stage and where it stands, by volume
// and by length from the stage inlet.
struct HotSpot {
  double T = 0, V = 0, z = 0;  // K, m3, m
};

// A reactor's heat in every output: heat_mode_name, or "cooled"; null
// for an exchanger.
const char* stage_heat_name(const StageResult& r);

// "constant", "cocurrent", "countercurrent".
const char* coolant_flow_name(CoolantFlow f);

// "counter", "parallel".
const char* flow_arrangement_name(FlowArrangement a);

// A reaction's effectiveness factor over a stage: its least and greatest
// along the integrated profile, and its value at the outlet.
struct EffectivenessRange {
  double min = 1, max = 1, outlet = 1;
};

// One solution of a stirred tank's balances, and its stability (the
// eigenvalues of the tank's dynamic balances linearized there,
// models/tank_stability.hpp; empty where they were not computed).
struct SteadyState {
  double T = 0;
  double X = 0;
  std::vector<double> F;
  bool outlet = false;                            // the state the stage reports as its outlet
  std::vector<std::complex<double>> eigenvalues;  // 1/s
  StabilityKind kind = StabilityKind::Stable;     // meaningful with eigenvalues
  bool stable() const { return kind == StabilityKind::Stable; }
};

// Why a reactor's path (or a tank's branch) ends where it does as the
// stage grows without bound.
enum class ReachEnd {
  Equilibrium,      // every reaction that could still move the key is at equilibrium
  ReactantUsedUp,   // a reactant ran out (StageReach::species)
  TemperatureStop,  // the path reached PfrOptions::stop_temperature
  RateVanishes,     // irreversible reactions that slow to nothing short of either
  SpaceTimeBound,   // still moving at PfrOptions::max_space_time
};

// What a reactor stage can reach at any size, from its inlet and heat mode:
// the largest key conversion along its path (tubular: the adiabatic or
// isothermal plug-flow path; stirred tank: its steady states as the volume
// grows, on the branch from the feed), and the end point the path tends
// to. With one reaction the two coincide; with several, the key's
// conversion can peak inside the bed and fall back towards the end point.
struct StageReach {
  double X_max = 0;  // largest key conversion at any size
  // m3, where it occurs; empty when X_max is the end point itself, which
  // the path only approaches as the stage grows without bound.
  std::optional<double> V_at_X_max;
  double T_at_X_max = 0;  // K
  double X_end = 0;       // key conversion at the end point
  double T_end = 0;       // K
  ReachEnd end = ReachEnd::Equilibrium;
  int species = -1;  // the reactant used up (ReachEnd::ReactantUsedUp)
  // X_max lies inside the path: a larger stage gives conversion back.
  bool peak_inside() const { return X_max > X_end + kReachPeakTolerance; }
  // Conversions closer than this are one point (well above the ~1e-8
  // accuracy of an integrated path).
  static constexpr double kReachPeakTolerance = 1e-6;
};

// Why the end point is where it is, as a noun phrase for messages: "the
// adiabatic equilibrium limit", "the equilibrium limit", "B used up", ...
// `species` names the species in mechanism order.
std::string reach_end_text(const StageReach& reach, HeatMode heat,
                           const std::vector<std::string>& species);
// Machine name of the end: "equilibrium", "reactant_used_up",
// "temperature_limit", "rates_die_away", "space_time_bound".
const char* reach_end_name(ReachEnd end);

// Sets reach.end (and reach.species) from the end state's flows F_end:
// a reactant of a reaction that consumes the key run out (to 1e-6 of its
// inlet flow) comes first, then a path still moving (`still_rising`: the
// key's conversion would still grow by over 1e-6 if the path went on as
// far again), then equilibrium when a reversible reaction exists; else
// the rates have died away. The caller sets TemperatureStop itself.
void classify_reach_end(const Mechanism& mech, const Stream& inlet, const double* F_end, int key,
                        bool still_rising, StageReach& reach);

// What a caller already knows of a stage's path, so that a reach need not
// compute it again (a train's views: the stage was just run, and its
// equilibrium record solved). Both are optional.
struct ReachHints {
  // A point of the path from the same inlet, with the same heat mode,
  // rates and pressure: its volume (m3) and state. A tubular reach with one
  // reaction (X monotonic along the path) goes on from there.
  std::optional<double> V_from;
  std::optional<Stream> state_from;
  // The exact adiabatic (isothermal) equilibrium from the inlet, as
  // equilibrium_record's X_ad_eq and T_ad_eq give it (one reaction).
  std::optional<double> X_eq_end, T_eq_end;
};

// With one reaction whose path ends at equilibrium (reach.end), the end
// point is set to the exact adiabatic (isothermal) equilibrium point that
// the integration or the tank's continuation only approaches (the hints'
// when given); a failed equilibrium solve leaves the approached one.
void exact_equilibrium_end(const Mechanism& mech, const Stream& inlet, HeatMode heat,
                           const ConversionBasis& basis, StageReach& reach,
                           const ReachHints& known = {});

// Settles a reach from its path: the most is the end point unless a peak
// stands above it (peak_inside), and the end point is only approached as
// the stage grows without bound (V_at_X_max empty), except where the path
// was cut at the temperature limit or the space-time bound, at V_last.
void finish_reach(StageReach& reach, double V_last);

// "stage R1: target conversion 0.9700 is out of reach; the most this stage
// can reach is X = ... (at T = ... K, the adiabatic equilibrium limit)",
// with where the peak lies and what a larger stage falls back to when the
// most lies inside the path.
std::string out_of_reach_text(const ReactorSpec& spec, double X_target, const StageReach& reach,
                              const Mechanism& mech);

// A tubular stage's bed as built (its `bed` or `tubes`) and what flows
// through it, SI. Velocities are superficial (volumetric flow / flow area).
struct StageHydraulics {
  BedGeometry geometry;
  double flow_area = 0;                      // m2
  double length = 0;                         // m, the bed's (tubes') length, V / flow_area
  std::optional<double> particle_diameter;   // m, d_p = 6 V_p / S_p (with a pellet)
  std::optional<double> mass_flux;           // kg/(m2 s), G (every molar mass known)
  double velocity_in = 0, velocity_out = 0;  // m/s
  std::optional<double> reynolds_particle;   // G d_p / mu at the inlet
  // Pa, inlet less outlet pressure; empty where the stage runs at constant
  // pressure (no pellet, or no viscosity).
  std::optional<double> dP;
  // `diameter: auto`: the pressure drop the diameter was sized to (the
  // diameter found is geometry.diameter).
  std::optional<double> dP_max;
};

// A feed-effluent interchanger as it ran at a loop's steady state. Its
// stage row is its cold side (inlet, outlet, duty: the heat the cold stream
// gains); its hot side is here: `hot_from`'s outlet, T_hot_in, leaves the
// hot side at T_hot_out, the next stage's inlet. Stage results stay one per
// stage of the case, in its order.
struct InterchangerResult {
  std::string hot_from;
  FlowArrangement arrangement = FlowArrangement::Counter;
  double UA = 0;                         // W/K
  double effectiveness = 0;              // duty / (C_min (T_hot_in - T_cold_in))
  double NTU = 0;                        // UA / C_min
  double C_cold = 0, C_hot = 0;          // W/K, each side's F cp at its mean temperature
  double T_cold_in = 0, T_cold_out = 0;  // K
  double T_hot_in = 0, T_hot_out = 0;    // K
  double duty = 0;                       // W, the heat passed from the hot side to the cold
};

struct StageResult {
  std::string id;
  StageKind kind = StageKind::Pfr;
  std::optional<HeatMode> heat;  // reactors only
  // A cooled stirred tank (heat is Adiabatic then): its wall and coolant.
  std::optional<TankCooling> cooling;
  bool sized = false;  // volume found from a target
  // Sized to an outlet purity: the target it was sized to (the outlet
  // stream says what it reached).
  std::optional<OutletTarget> outlet_target;
  Stream inlet;
  Stream outlet;
  std::optional<double> volume;          // m3
  std::optional<double> bulk_density;    // kg/m3
  double activity = 1;                   // catalyst activity (ReactorSpec::activity)
  std::optional<double> catalyst_mass;   // kg
  std::optional<double> space_time;      // s, V / v0 at inlet conditions
  std::optional<double> space_velocity;  // 1/s, 1 / space_time
  std::optional<double> ghsv;            // 1/h, inlet gas at 0 degC, 1 atm
  std::optional<double> whsv;            // 1/h, inlet mass flow / catalyst
  std::optional<double> lhsv;            // 1/h, inlet as liquid / volume
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
  // Reactor stages: the most the stage can reach at any size (filled with
  // the equilibrium views).
  std::optional<StageReach> reach;
  // Sized stages: relative change of the volume per 1e-6 of conversion at
  // the target (dV/dX * 1e-6 / V); large when the target lies close to
  // what the stage can reach and the size is ill-conditioned.
  std::optional<double> size_sensitivity;
  // Per wanted product of the case (TrainResult::products), cumulative
  // from the train's feed (filled by run_train; flowsheet/yields.hpp).
  std::vector<double> yield;
  std::vector<std::optional<double>> selectivity;
  // Tubular stages with catalyst pellets that give D_eff: the pellets (so
  // that what re-runs the stage runs it alike) and each reaction's
  // effectiveness factor over the stage; empty without.
  std::optional<PelletSpec> pellet;
  std::vector<EffectivenessRange> effectiveness;
  // Exchangers given U and a utility: the utility and the size
  // (models/heat_exchange.hpp); empty without.
  std::optional<UtilitySpec> utility;
  std::optional<ExchangerSize> exchanger_size;
  // Tubular stages given a bed or tubes: the bed as built and its flow.
  std::optional<StageHydraulics> hydraulics;
  // Quench stages: the side stream that joined, and the share of the feed
  // it is (with `share`); empty else.
  std::optional<Stream> side_stream;
  std::optional<double> share;
  // mol/s, the key fed so far at this stage's outlet (the first stage's
  // feed plus every side stream joined up to here): the conversion's
  // basis, X = 1 - F_key / F_key_fed (set by run_train).
  double F_key_fed = 0;
  // Cooled tubular stages: the coolant and the hot spot; empty else.
  std::optional<CoolantResult> coolant;
  std::optional<HotSpot> hot_spot;
  // Interchanger stages: the exchange, both sides; empty else.
  std::optional<InterchangerResult> interchanger;
};

// Fills space time, space velocity, GHSV, WHSV and LHSV from the stage's
// volume and inlet (each only where it applies). GHSV is on the whole gas;
// WHSV and LHSV on the inlet flows of the `basis` species (indices; empty:
// every species), as Case::space_velocity_basis names them. The stages
// fill them on the whole stream; the train applies the case's basis.
void add_space_velocities(const Mechanism& mech, StageResult& r, std::span<const int> basis = {});

// Volumetric rate multiplier of each reaction in a stage: the stage's
// catalyst activity, times the bulk density for per-catalyst rates. Throws InputError when a
// per-catalyst rate meets a stage without a bulk density.
std::vector<double> rate_multipliers(const Mechanism& mech, const ReactorSpec& spec);

}  // namespace rxtrain
