// Layouts of a train compared: every order of its reactor stages, each
// with the heat modes as written, all adiabatic, and all isothermal at the
// feed temperature. Exchangers keep their positions between reactor
// stages. A reactor stage moves with its whole spec: its type, heat mode,
// volume or catalyst mass, bulk density, or its conversion target. Orders
// that give the same train (identical specs at identical positions, e.g.
// two identical beds exchanged) are run once and listed as one layout with
// every order it stands for.
//
// A moved stage keeps its target: where a target is not above the
// conversion at the stage's new inlet, that layout is infeasible and its
// reason says so; the command as a whole still runs.
//
// Example:
//   const CompareResult r = compare_layouts(load_case("three-bed.yaml", units));
//   for (const Layout& l : r.layouts)
//     if (l.feasible) ...  // best first
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/stages/limit_check.hpp"

namespace rxtrain {

enum class LayoutHeat { AsWritten, Adiabatic, Isothermal };

// "as-written", "adiabatic", "isothermal".
const char* layout_heat_name(LayoutHeat heat);

struct CompareOptions {
  // Equilibrium views are switched off inside; limit_check sets the margin
  // of the notes.
  TrainOptions train;
  // Orders grow as n!; 6 reactor stages give 720 orders (x3 heat modes).
  int max_reactor_stages = 6;
  // The upper end of the temperatures the heat-capacity data are taken to
  // cover when no species of the case declares a range (constant cp, or a
  // polynomial without T_range): 1000 K, where low-temperature fits commonly
  // end (common practice, no source).
  double default_thermo_ceiling = 1000.0;  // K
};

// The highest temperature the case's heat-capacity data cover: the top of
// the highest finite range any species declares, or, when none does,
// CompareOptions::default_thermo_ceiling. Above it every cp is
// extrapolated, and so is every figure of a layout that gets there.
struct ThermoCeiling {
  double T = 0;         // K
  std::string species;  // whose declared range ends at T; empty: the default
};
ThermoCeiling thermo_ceiling(const Mechanism& mech, double default_ceiling);

// A reactor stage that sits elsewhere than in the case: positions count
// reactor stages only, from 1.
struct StageMove {
  std::string stage;
  int from = 0;
  int to = 0;
};

// Why a layout is infeasible.
enum class LayoutFailure {
  None,
  PassesLimit,  // a stage passes T_max or falls below T_in_min
  GivesBack,    // the outlet ends short of a stage's sizing target
  Equilibrium,  // a stage's target lies beyond its equilibrium
  Input,        // the layout is a case the loader would refuse
  Solver,       // the solver failed on it
};

struct Layout {
  // Reactor-stage ids in train order: of the orders below, the one that
  // moves the fewest stages from the case.
  std::vector<std::string> order;
  // Every order that gives this same train, `order` first.
  std::vector<std::vector<std::string>> orders;
  std::vector<StageMove> moves;  // of `order` against the case; empty: as written
  LayoutHeat heat = LayoutHeat::AsWritten;
  bool case_layout = false;  // the case exactly as written
  bool feasible = false;
  // Why not, when infeasible (report/compare_report.hpp phrases it).
  LayoutFailure failure = LayoutFailure::None;
  // The message of the error that stopped the run (Equilibrium, Input,
  // Solver), worded where it was thrown.
  std::string error;
  // The run against the case's limits: its Over and Under findings make
  // the layout infeasible (PassesLimit); its Near findings are noted.
  LimitCheck limit_check;
  // GivesBack: the highest stage target of the sized train, which the
  // outlet falls short of.
  std::optional<double> X_sized;
  std::optional<double> total_volume;    // m3
  std::optional<double> total_catalyst;  // kg, when every reactor has one
  std::optional<double> conversion;      // overall key conversion at the outlet
  std::optional<double> T_peak;          // K, hottest point of the train
  // T_peak above CompareResult::thermo_ceiling: the layout's figures rest
  // on extrapolated heat capacities. Said beside the layout, never folded
  // into its rank.
  bool beyond_thermo = false;
};

struct CompareResult {
  // True when any reactor stage is sized to a target: layouts rank by the
  // smallest total catalyst (or volume, for per-volume rates); otherwise
  // by the highest final conversion.
  bool sized = false;
  bool catalyst_objective = false;      // ranked by catalyst mass, not volume
  std::vector<std::string> case_order;  // reactor-stage ids as written
  ThermoCeiling thermo_ceiling;
  std::vector<Layout> layouts;  // best first, infeasible last
};

// Throws InputError when the train has more reactor stages than
// options.max_reactor_stages (or none).
CompareResult compare_layouts(const Case& c, const CompareOptions& options = {});

}  // namespace rxtrain
