#include "rxtrain/studies/compare.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/studies/bed_layout.hpp"

namespace rxtrain {

const char* layout_heat_name(LayoutHeat heat) {
  switch (heat) {
    case LayoutHeat::AsWritten:
      return "as-written";
    case LayoutHeat::Adiabatic:
      return "adiabatic";
    case LayoutHeat::Isothermal:
      return "isothermal";
  }
  return "?";
}

ThermoCeiling thermo_ceiling(const Mechanism& mech, double default_ceiling) {
  ThermoCeiling out{default_ceiling, ""};
  bool stated = false;
  for (const auto& s : mech.species()) {
    const auto range = s.thermo.declared_range();
    // An open upper end states nothing about how far up the data hold.
    if (!range || !std::isfinite((*range)[1])) continue;
    if (!stated || (*range)[1] > out.T) out = {(*range)[1], s.id};
    stated = true;
  }
  return out;
}

namespace {

// A reactor stage's spec under a layout's heat mode.
ReactorSpec with_heat(ReactorSpec r, LayoutHeat heat) {
  if (heat == LayoutHeat::Adiabatic) r.heat = HeatMode::Adiabatic;
  if (heat == LayoutHeat::Isothermal) r.heat = HeatMode::Isothermal;
  // The layout's heat replaces a tank's wall and a tube's coolant.
  if (heat != LayoutHeat::AsWritten) {
    r.cooling.reset();
    r.tank_cooling.reset();
  }
  return r;
}

// Two stages are interchangeable when everything that shapes the run is
// equal; the id and the place in the file are only names.
bool same_spec(const ReactorSpec& a, const ReactorSpec& b) {
  // The bed as built (it sets the pressure drop) and the pellet's size.
  auto same_bed = [](const ReactorSpec& x, const ReactorSpec& y) {
    if (x.geometry.has_value() != y.geometry.has_value()) return false;
    if (x.geometry &&
        (x.geometry->tubes != y.geometry->tubes || x.geometry->diameter != y.geometry->diameter ||
         x.geometry->void_fraction != y.geometry->void_fraction))
      return false;
    if (x.pellet.has_value() != y.pellet.has_value()) return false;
    return !x.pellet || (x.pellet->shape == y.pellet->shape && x.pellet->size == y.pellet->size &&
                         x.pellet->length == y.pellet->length);
  };
  return a.type == b.type && a.heat == b.heat && a.volume == b.volume &&
         a.catalyst_mass == b.catalyst_mass && a.bulk_density == b.bulk_density &&
         a.target_conversion == b.target_conversion && a.activity == b.activity &&
         a.tank_cooling.has_value() == b.tank_cooling.has_value() &&
         (!a.tank_cooling || (a.tank_cooling->UA == b.tank_cooling->UA &&
                              a.tank_cooling->T_coolant == b.tank_cooling->T_coolant)) &&
         a.cooling.has_value() == b.cooling.has_value() &&
         (!a.cooling || (a.cooling->U == b.cooling->U && a.cooling->T == b.cooling->T &&
                         a.cooling->direction == b.cooling->direction &&
                         a.cooling->flow == b.cooling->flow && a.cooling->cp == b.cooling->cp)) &&
         a.heat_capacity == b.heat_capacity && same_bed(a, b);
}

// The case with its reactors in `order` (indices into `reactors`) placed
// into the reactor slots of the train, each with its whole spec, heat modes
// set for `heat`.
Case layout_case(const Case& c, const std::vector<ReactorSpec>& reactors,
                 const std::vector<int>& order, LayoutHeat heat) {
  Case out = c;
  out.train.clear();
  std::size_t slot = 0;
  for (const auto& spec : c.train) {
    if (const auto* ex = std::get_if<ExchangerSpec>(&spec)) {
      // Isothermal at the feed temperature: exchangers would only move the
      // reactors off it, so they are left out.
      if (heat != LayoutHeat::Isothermal) out.train.emplace_back(*ex);
      continue;
    }
    out.train.emplace_back(with_heat(reactors[order[slot++]], heat));
  }
  return out;
}

// Runs one layout. `X_sized`: the highest stage target of a sized train,
// which every layout of it must still reach at its outlet. A layout whose
// stage passes the case's temperature limits is infeasible (its limit
// check holds the findings); so is a layout the loader would refuse
// (validate_case), with the loader's message.
Layout evaluate(const Case& lc, const TrainOptions& options, const std::optional<double>& X_sized) {
  Layout l;
  try {
    // A layout is a case built here: checked as a loaded one before it runs.
    validate_case(lc);
    const TrainResult res = run_train(lc, options);
    double V = 0, W = 0, T_hi = res.feed.T;
    bool all_catalyst = true;
    for (const auto& s : res.stages) {
      T_hi = std::max({T_hi, s.T_max, s.outlet.T});
      if (!is_reactor(s.kind)) continue;
      V += s.volume.value_or(0);
      if (s.catalyst_mass)
        W += *s.catalyst_mass;
      else
        all_catalyst = false;
    }
    l.total_volume = V;
    if (all_catalyst) l.total_catalyst = W;
    l.conversion = res.conversion;
    l.T_peak = T_hi;
    l.limit_check = res.limit_check;
    l.feasible = !res.limit_check.passed();
    if (!l.feasible) l.failure = LayoutFailure::PassesLimit;
    if (l.feasible && X_sized && res.conversion < *X_sized - kReachTolerance) {
      l.feasible = false;
      l.failure = LayoutFailure::GivesBack;
      l.X_sized = X_sized;
    }
  } catch (const InfeasibleError& e) {
    l.failure = LayoutFailure::Equilibrium;
    l.error = e.message();
  } catch (const InputError& e) {
    l.failure = LayoutFailure::Input;
    l.error = e.message();
  } catch (const SolverError& e) {
    l.failure = LayoutFailure::Solver;
    l.error = e.what();
  }
  return l;
}

// Orders of the reactor stages that give one train under one heat mode.
struct OrderGroup {
  std::vector<std::vector<int>> orders;  // enumeration order
};

// Every order of `reactors`, grouped by the train it gives under `heat`:
// orders whose stages have equal specs position by position fall together.
std::vector<OrderGroup> group_orders(const std::vector<ReactorSpec>& reactors, LayoutHeat heat) {
  // Each stage's class: the first stage with an equal spec under `heat`.
  std::vector<int> cls(reactors.size());
  for (std::size_t i = 0; i < reactors.size(); ++i) {
    cls[i] = static_cast<int>(i);
    for (std::size_t j = 0; j < i; ++j)
      if (same_spec(with_heat(reactors[i], heat), with_heat(reactors[j], heat))) {
        cls[i] = cls[j];
        break;
      }
  }
  std::vector<OrderGroup> groups;
  std::map<std::vector<int>, std::size_t> index;
  std::vector<int> order(reactors.size());
  std::iota(order.begin(), order.end(), 0);
  do {
    std::vector<int> key;
    for (int k : order) key.push_back(cls[k]);
    const auto [it, fresh] = index.emplace(key, groups.size());
    if (fresh) groups.emplace_back();
    groups[it->second].orders.push_back(order);
  } while (std::next_permutation(order.begin(), order.end()));
  return groups;
}

int displaced(const std::vector<int>& order) {
  int n = 0;
  for (std::size_t k = 0; k < order.size(); ++k) n += order[k] != static_cast<int>(k);
  return n;
}

// Names the group's orders, the one that moves the fewest stages first
// (ties: enumeration order), and that order's moves against the case.
// Returns that order, the one to run (its ids name the stages in messages).
std::vector<int> name_orders(Layout& l, std::vector<std::vector<int>> orders,
                             const std::vector<ReactorSpec>& reactors) {
  std::stable_sort(orders.begin(), orders.end(),
                   [](const auto& a, const auto& b) { return displaced(a) < displaced(b); });
  for (const auto& o : orders) {
    std::vector<std::string> ids;
    for (int k : o) ids.push_back(reactors[k].id);
    l.orders.push_back(std::move(ids));
  }
  l.order = l.orders.front();
  const auto& best = orders.front();
  for (std::size_t slot = 0; slot < best.size(); ++slot)
    if (best[slot] != static_cast<int>(slot))
      l.moves.push_back({reactors[best[slot]].id, best[slot] + 1, static_cast<int>(slot) + 1});
  return best;
}

}  // namespace

CompareResult compare_layouts(const Case& c, const CompareOptions& options) {
  std::vector<ReactorSpec> reactors;
  bool any_exchanger = false;
  for (const auto& spec : c.train)
    if (const auto* x = std::get_if<InterchangerSpec>(&spec))
      throw InputError(x->where, fmt::format("stage {} is a feed-effluent interchanger; compare "
                                             "reorders reactors in a once-through train and does "
                                             "not solve loops: rate the loop with run",
                                             x->id));
  for (const auto& spec : c.train)
    if (const auto* q = std::get_if<QuenchSpec>(&spec))
      throw InputError(q->where, fmt::format("stage {} is a quench; compare reorders reactors "
                                             "around exchangers only and does not handle side "
                                             "streams yet: rate the train with run",
                                             q->id));
  for (const auto& spec : c.train) {
    if (const auto* r = std::get_if<ReactorSpec>(&spec))
      reactors.push_back(*r);
    else
      any_exchanger = true;
  }
  if (reactors.empty())
    throw InputError({c.file, 0, 0}, "compare: the train has no reactor stage to arrange");
  if (static_cast<int>(reactors.size()) > options.max_reactor_stages)
    throw InputError(reactors[options.max_reactor_stages].where,
                     fmt::format("compare: the train has {} reactor stages; at most {} can be "
                                 "arranged in every order (the count of orders grows as n!)",
                                 reactors.size(), options.max_reactor_stages));

  CompareResult out;
  out.thermo_ceiling = thermo_ceiling(c.mechanism, options.default_thermo_ceiling);
  bool all_adiabatic = true, all_isothermal = true, all_catalyst_rates = true;
  std::optional<double> X_sized;
  for (const auto& r : reactors) {
    out.case_order.push_back(r.id);
    if (r.target_conversion) X_sized = std::max(X_sized.value_or(0.0), *r.target_conversion);
    all_adiabatic = all_adiabatic && r.heat == HeatMode::Adiabatic && !r.cooling && !r.tank_cooling;
    all_isothermal = all_isothermal && r.heat == HeatMode::Isothermal;
  }
  out.sized = X_sized.has_value();
  for (const auto& rx : c.mechanism.reactions())
    all_catalyst_rates = all_catalyst_rates && rx.rate.basis == RateBasis::Catalyst;
  out.catalyst_objective = all_catalyst_rates;

  // Heat modes that differ from the case as written.
  std::vector<LayoutHeat> modes{LayoutHeat::AsWritten};
  if (!all_adiabatic) modes.push_back(LayoutHeat::Adiabatic);
  if (!(all_isothermal && !any_exchanger)) modes.push_back(LayoutHeat::Isothermal);

  TrainOptions train = options.train;
  train.equilibrium_views = false;  // only totals are compared
  for (LayoutHeat heat : modes) {
    for (const auto& g : group_orders(reactors, heat)) {
      Layout named;
      const std::vector<int> order = name_orders(named, g.orders, reactors);
      Layout l = evaluate(layout_case(c, reactors, order, heat), train, X_sized);
      l.order = std::move(named.order);
      l.orders = std::move(named.orders);
      l.moves = std::move(named.moves);
      l.heat = heat;
      l.case_layout = heat == LayoutHeat::AsWritten && l.moves.empty();
      l.beyond_thermo = l.T_peak && *l.T_peak > out.thermo_ceiling.T;
      out.layouts.push_back(std::move(l));
    }
  }

  // Best first; ties keep the enumeration order (stable sort).
  auto size_of = [&](const Layout& l) {
    if (out.catalyst_objective && l.total_catalyst) return *l.total_catalyst;
    return l.total_volume.value_or(0);
  };
  std::stable_sort(out.layouts.begin(), out.layouts.end(), [&](const Layout& a, const Layout& b) {
    if (a.feasible != b.feasible) return a.feasible;
    if (!a.feasible) return false;
    if (out.sized) return size_of(a) < size_of(b);
    return a.conversion.value_or(0) > b.conversion.value_or(0);
  });
  return out;
}

}  // namespace rxtrain
