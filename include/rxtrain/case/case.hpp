// A validated, immutable case: everything in SI. load_case() is the only
// user of yaml-cpp; every input error it finds is an InputError with the
// file, line and column of the offending value.
#pragma once

#include <optional>
#include <string>
#include <variant>
#include <vector>

#include "rxtrain/base/error.hpp"
#include "rxtrain/case/bed_spec.hpp"
#include "rxtrain/chem/heat_mode.hpp"
#include "rxtrain/chem/stream.hpp"
#include "rxtrain/kinetics/mechanism.hpp"
#include "rxtrain/kinetics/pellet_spec.hpp"

namespace rxtrain {

class UnitParser;

enum class ReactorType { Pfr, Cstr };

// An outlet-purity target (`target: {outlet: {C2H2: 1 ppm}}`): the stage is
// sized until `species`' outlet mole fraction falls to `x`.
struct OutletTarget {
  int species = -1;  // index into the mechanism's species
  double x = 0;      // mole fraction, 0 < x < the inlet's
};

// A stirred tank's cooling (`heat: {UA: 40 kW/K, coolant: {T: 300 K}}` on a
// cstr): the wall takes UA (T - T_coolant) out of the contents, W. The
// coolant's temperature is constant (a large or boiling coolant flow).
struct TankCooling {
  double UA = 0;         // W/K, positive
  double T_coolant = 0;  // K
};

// How a coolant outside the tubes flows, relative to the process stream.
enum class CoolantFlow {
  Constant,       // one temperature all along (a boiling coolant)
  Cocurrent,      // enters with the process stream
  Countercurrent  // enters at the process outlet
};

// A cooled tubular stage (`heat: {U, coolant}`): the heat taken per bed
// volume is U (4 / d_tube) (T - T_coolant), d_tube the tubes' inside
// diameter (`tubes`, required). A coolant with a flow warms (or cools) by
// its own energy balance, flow * cp * dT_coolant.
struct CoolingSpec {
  double U = 0;  // W/(m2 K), on the tube's inner surface
  // K: the constant coolant temperature, or the coolant's inlet
  // temperature (where it enters, in its own flow direction).
  double T = 0;
  CoolantFlow direction = CoolantFlow::Constant;
  std::optional<double> flow;  // kg/s, the coolant's mass flow (with a direction)
  std::optional<double> cp;    // J/(kg K), the coolant's specific heat
  SourceLocation where;        // the `heat` entry
};

// A reactor stage. Exactly one of volume / catalyst_mass / target_conversion
// / target_outlet is set (catalyst_mass needs bulk_density; volume =
// catalyst_mass / bulk_density).
struct ReactorSpec {
  std::string id;
  ReactorType type = ReactorType::Pfr;
  HeatMode heat = HeatMode::Adiabatic;
  std::optional<double> volume;             // m3
  std::optional<double> catalyst_mass;      // kg
  std::optional<double> bulk_density;       // kg/m3
  std::optional<double> target_conversion;  // overall key conversion to reach
  std::optional<OutletTarget> target_outlet;
  bool sized() const { return target_conversion || target_outlet; }
  // Catalyst activity: multiplies every rate in the stage (1: the rates as
  // the kinetics give them; e.g. 0.7 to design for end of run).
  double activity = 1;
  // Catalyst pellets: effectiveness factors of a tubular stage when D_eff
  // is given (models/pellet.hpp); absent: the intrinsic rates.
  std::optional<PelletSpec> pellet;
  // The bed as built (tubular stages): with a pellet and a viscosity, the
  // pressure falls along it by Ergun (models/hydraulics.hpp); otherwise
  // the stage runs at constant pressure.
  std::optional<BedGeometry> geometry;
  // The fluid's viscosity (top-level `fluid`), copied to every reactor by
  // the loader so that a stage runs from its spec alone.
  std::optional<ViscosityLaw> viscosity;
  // Stirred tanks only. A cooled tank (heat = Adiabatic with tank_cooling set:
  // its energy balance closes with the wall's heat; see TankCooling).
  std::optional<TankCooling> tank_cooling;
  // Stirred tanks only: the heat capacity of the vessel and catalyst, J/K,
  // added to the contents' in the dynamic energy balance (it moves the
  // eigenvalues of a steady state, never the state itself). Absent: 0.
  std::optional<double> heat_capacity;
  // A cooled tubular stage (`heat: {U, coolant}`): its energy balance is
  // the adiabatic one plus the heat through the tube walls; `heat` stays
  // Adiabatic. Needs `geometry` with tubes.
  std::optional<CoolingSpec> cooling;
  bool has_pressure_drop() const {
    return type == ReactorType::Pfr && geometry && pellet && viscosity;
  }
  SourceLocation where;
};

// An interstage cooler or heater: exactly one of T_out and duty.
// The utility on the other side of an exchanger: a sensible one entering
// at T_in and leaving at T_out (with cp, its flow follows), or a boiling or
// condensing one at one temperature (T_in == T_out, no cp).
struct UtilitySpec {
  double T_in = 0, T_out = 0;  // K
  std::optional<double> cp;    // J/(kg K)
};

struct ExchangerSpec {
  std::string id;
  std::optional<double> T_out;  // K
  std::optional<double> duty;   // W, heat added to the stream
  // Optional sizing (both or neither): the overall coefficient, W/(m2 K),
  // and the utility on the other side (models/heat_exchange.hpp).
  std::optional<double> U;
  std::optional<UtilitySpec> utility;
  SourceLocation where;
};

// A cold shot (`type: quench`): a side stream joins the process stream and
// mixes with it adiabatically. Either a `share` of the case's feed (the
// first stage then gets 1 - the sum of the shares; this share joins here
// at `T`, default the feed's, and the feed's pressure) or an independent
// side `stream` (its T, P and flows). Stands after a reactor.
struct QuenchSpec {
  std::string id;
  std::optional<double> share;   // 0 < share < 1, of the case's feed
  std::optional<double> T;       // K, the share's temperature (default: the feed's)
  std::optional<Stream> stream;  // an independent side stream
  SourceLocation where;
};

// How the two streams of an interchanger flow past each other.
enum class FlowArrangement { Counter, Parallel };

// A feed-effluent interchanger (`type: interchanger`): its cold side stands
// where it is in the train (the stream arriving is heated); its hot side is
// the outlet of the later stage `hot_from`, which passes it right after that
// stage and is cooled by the same duty. UA is constant; each side's heat
// capacity flow is taken at its mean temperature (models/heat_exchange.hpp).
// The train becomes a loop, solved on the cold side's outlet temperature
// (flowsheet/loop.hpp). One interchanger per train.
struct InterchangerSpec {
  std::string id;
  std::string hot_from;  // id of a reactor or exchanger after this stage
  double UA = 0;         // W/K, positive
  FlowArrangement arrangement = FlowArrangement::Counter;
  SourceLocation where;
};

using StageSpec = std::variant<ReactorSpec, ExchangerSpec, QuenchSpec, InterchangerSpec>;

const std::string& stage_id(const StageSpec& s);

// The catalyst's temperature window (top-level `limits`), both optional:
// T_max is the highest temperature allowed anywhere in a bed, T_in_min the
// lowest useful bed inlet temperature. When both are given, T_in_min <
// T_max. Read by `rxtrain staging` and the design checks.
struct TemperatureLimits {
  std::optional<double> T_max;     // K
  std::optional<double> T_in_min;  // K
  SourceLocation where;            // the `limits` entry; file only when absent
};

struct Case {
  std::string title;
  std::string file;  // path as given
  Mechanism mechanism;
  Stream feed;
  int key = 0;
  std::vector<StageSpec> train;
  std::vector<std::string> warnings;  // non-fatal findings of the loader
  // Train-level target (top-level `target: {conversion: X}`), 0 < X < 1:
  // the overall key conversion the whole train should reach.
  std::optional<double> target_conversion;
  // Or an outlet purity of the whole train (`target: {outlet: {SP: x}}`):
  // `run` says whether the train's outlet meets it; the staged studies,
  // which size beds to a conversion, refuse it.
  std::optional<OutletTarget> target_outlet;
  SourceLocation target_where;  // the `target` entry; file only when absent
  TemperatureLimits limits;
  // Species WHSV and LHSV are quoted on (top-level `space_velocity_basis`),
  // as indices into the mechanism's species, each with a molar mass; empty
  // (the default): the whole stream. GHSV is always on the whole gas.
  std::vector<int> space_velocity_basis;
  // The wanted products (top-level `products`), as indices into the
  // mechanism's species; each is formed by some reaction.
  std::vector<int> products;

  ConversionBasis conversion_basis() const { return {key, feed.F[key]}; }
  // The sum of the quench shares (0 without): the first stage gets
  // (1 - quench_shares()) of the feed.
  double quench_shares() const;
  // The train's interchanger (a loop), or null.
  const InterchangerSpec* interchanger() const;
};

// A conversion counts as reached when it is within this (absolute) of the
// conversion aimed at, in every comparison of the studies (staging,
// optimize, and compare's sized layouts) and in `run`'s check of the
// train-level target. 1e-6:
// far below the four decimals shown, above the CVODE root on a conversion
// (~1e-10) and above the agreement of the optimizer's quadrature with the
// train solver on the same beds (its check warns only past 1e-5), so that
// a train written by `optimize` reaches its own target when run again.
inline constexpr double kReachTolerance = 1e-6;

// Reads and validates a case file. Throws InputError.
Case load_case(const std::string& path, const UnitParser& units);
// Same, from text; `name` stands in for the file name in messages.
Case load_case_from_string(const std::string& text, const std::string& name,
                           const UnitParser& units);

}  // namespace rxtrain
