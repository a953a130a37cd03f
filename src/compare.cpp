#include "rxtrain/compare.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <numeric>

#include "rxtrain/error.hpp"

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

namespace {

// The case with its reactors in `order` (indices into `reactors`) placed
// into the reactor slots of the train, heat modes set for `heat`.
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
    const ReactorSpec& here = std::get<ReactorSpec>(spec);
    ReactorSpec moved = reactors[order[slot]];
    if (here.target_conversion) {
      // The position keeps its target; the reactor brings type and heat.
      moved.volume.reset();
      moved.catalyst_mass.reset();
      moved.target_conversion = here.target_conversion;
    } else if (moved.target_conversion) {
      moved.target_conversion.reset();
      moved.volume = here.volume;
      moved.catalyst_mass = here.catalyst_mass;
      if (here.catalyst_mass) moved.bulk_density = here.bulk_density;
    }
    if (heat == LayoutHeat::Adiabatic) moved.heat = HeatMode::Adiabatic;
    if (heat == LayoutHeat::Isothermal) moved.heat = HeatMode::Isothermal;
    out.train.emplace_back(std::move(moved));
    ++slot;
  }
  return out;
}

Layout evaluate(const Case& lc, const TrainOptions& options) {
  Layout l;
  for (const auto& spec : lc.train)
    if (const auto* r = std::get_if<ReactorSpec>(&spec)) l.order.push_back(r->id);
  try {
    const TrainResult res = run_train(lc, options);
    double V = 0, W = 0, T_hi = res.feed.T;
    bool all_catalyst = true;
    for (const auto& s : res.stages) {
      T_hi = std::max({T_hi, s.T_max, s.outlet.T});
      if (s.kind == StageKind::Exchanger) continue;
      V += s.volume.value_or(0);
      if (s.catalyst_mass)
        W += *s.catalyst_mass;
      else
        all_catalyst = false;
    }
    l.total_volume = V;
    if (all_catalyst) l.total_catalyst = W;
    l.conversion = res.conversion;
    l.T_max = T_hi;
    l.feasible = !res.limit_check.passed();
    for (const auto& f : res.limit_check.findings) {
      const std::string s = limit_finding_text(f, res.limit_check.margin);
      if (f.kind == LimitFindingKind::Near)
        l.notes.push_back(s);
      else
        l.reason += (l.reason.empty() ? "" : "; ") + s;
    }
  } catch (const InfeasibleError& e) {
    l.reason = "equilibrium: " + e.message();
  } catch (const InputError& e) {
    l.reason = e.message();
  } catch (const SolverError& e) {
    l.reason = std::string("solver: ") + e.what();
  }
  return l;
}

}  // namespace

CompareResult compare_layouts(const Case& c, const CompareOptions& options) {
  std::vector<ReactorSpec> reactors;
  bool any_exchanger = false;
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
  bool all_adiabatic = true, all_isothermal = true, all_catalyst_rates = true;
  for (const auto& r : reactors) {
    out.sized = out.sized || r.target_conversion.has_value();
    all_adiabatic = all_adiabatic && r.heat == HeatMode::Adiabatic;
    all_isothermal = all_isothermal && r.heat == HeatMode::Isothermal;
  }
  for (const auto& rx : c.mechanism.reactions())
    all_catalyst_rates = all_catalyst_rates && rx.rate.basis == RateBasis::Catalyst;
  out.catalyst_objective = all_catalyst_rates;

  // Heat modes that differ from the case as written.
  std::vector<LayoutHeat> modes{LayoutHeat::AsWritten};
  if (!all_adiabatic) modes.push_back(LayoutHeat::Adiabatic);
  if (!(all_isothermal && !any_exchanger)) modes.push_back(LayoutHeat::Isothermal);

  TrainOptions train = options.train;
  train.equilibrium_views = false;  // only totals are compared
  std::vector<int> order(reactors.size());
  std::iota(order.begin(), order.end(), 0);
  bool first = true;
  do {
    for (LayoutHeat heat : modes) {
      Layout l = evaluate(layout_case(c, reactors, order, heat), train);
      l.heat = heat;
      l.case_layout = first && heat == LayoutHeat::AsWritten;
      out.layouts.push_back(std::move(l));
    }
    first = false;
  } while (std::next_permutation(order.begin(), order.end()));

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
