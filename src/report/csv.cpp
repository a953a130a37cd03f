#include "rxtrain/report/csv.hpp"

#include <fmt/format.h>

#include <cmath>
#include <optional>

#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

// Round-trip precision; a value that does not apply (or is not finite,
// which a finished run never produces) is an empty cell, never "nan".
std::string cell(double v) { return std::isfinite(v) ? fmt::format("{:.12g}", v) : ""; }
std::string cell(const std::optional<double>& v) { return v ? cell(*v) : ""; }

std::string flow_headers(const TrainResult& result) {
  std::string h;
  for (const auto& id : result.species) h += fmt::format(",F_{}_mol_per_s", id);
  return h;
}

}  // namespace

std::string stages_csv(const TrainResult& result) {
  std::string out =
      "stage,type,heat,sized,volume_m3,catalyst_mass_kg,space_time_s,ghsv_per_h,whsv_per_h,"
      "lhsv_per_h,duty_W,T_in_K,T_out_K,T_peak_K,T_min_K,P_Pa,conversion,mass_flow_kg_per_s,"
      "mass_balance" +
      flow_headers(result);
  // Per wanted product (none without products:): yield and selectivity,
  // cumulative from the feed.
  for (const auto& p : result.products) out += fmt::format(",yield_{0},selectivity_{0}", p);
  out += "\n";
  for (const auto& r : result.stages) {
    const std::string heat = heat_text(r, "");
    out += fmt::format("{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{}", r.id,
                       stage_kind_name(r.kind), heat, r.sized ? "yes" : "no", cell(r.volume),
                       cell(r.catalyst_mass), cell(r.space_time), cell(r.ghsv), cell(r.whsv),
                       cell(r.lhsv), cell(r.duty), cell(r.inlet.T), cell(r.outlet.T), cell(r.T_max),
                       cell(r.T_min), cell(r.outlet.P), cell(r.conversion));
    out += fmt::format(",{},{}", cell(mass_flow(r.outlet, result.molar_mass)),
                       cell(mass_balance_closure(r.inlet, r.outlet, result.molar_mass)));
    for (double f : r.outlet.F) out += fmt::format(",{}", cell(f));
    for (std::size_t k = 0; k < result.products.size(); ++k) {
      const bool has = k < r.yield.size() && k < r.selectivity.size();
      out += fmt::format(",{},{}", has ? cell(r.yield[k]) : "", has ? cell(r.selectivity[k]) : "");
    }
    out += "\n";
  }
  return out;
}

std::string streams_csv(const TrainResult& result) {
  std::string out =
      "stream,T_K,P_Pa,total_flow_mol_per_s,mass_flow_kg_per_s" + flow_headers(result);
  for (const auto& id : result.species) out += fmt::format(",y_{}", id);
  out += "\n";
  auto row = [&](const std::string& name, const Stream& s) {
    out += fmt::format("{},{},{},{},{}", name, cell(s.T), cell(s.P), cell(s.total_flow()),
                       cell(mass_flow(s, result.molar_mass)));
    for (double f : s.F) out += fmt::format(",{}", cell(f));
    for (double y : mole_fractions(s)) out += fmt::format(",{}", cell(y));
    out += "\n";
  };
  row("feed", result.feed);
  for (const auto& r : result.stages) row(r.id + " outlet", r.outlet);
  return out;
}

std::string profiles_csv(const TrainResult& result) {
  std::string out = "stage,V_m3,T_K,P_Pa,conversion" + flow_headers(result);
  // Effectiveness factors per reaction, when a stage has them (empty cells
  // in the stages without).
  bool eta = false;
  for (const auto& r : result.stages) eta = eta || !r.effectiveness.empty();
  if (eta)
    for (const auto& id : result.reactions) out += ",eta_" + id;
  // The coolant's temperature, when a stage is cooled (empty elsewhere).
  bool cooled = false;
  for (const auto& r : result.stages) cooled = cooled || r.coolant.has_value();
  if (cooled) out += ",T_coolant_K";
  out += "\n";
  for (const auto& r : result.stages) {
    for (const auto& p : r.profile) {
      out += fmt::format("{},{},{},{},{}", r.id, cell(p.V), cell(p.T),
                         cell(p.P.value_or(r.inlet.P)), cell(p.X));
      for (double f : p.F) out += fmt::format(",{}", cell(f));
      if (eta)
        for (std::size_t j = 0; j < result.reactions.size(); ++j)
          out += "," + (j < p.eta.size() ? cell(p.eta[j]) : std::string());
      if (cooled) out += "," + (p.T_coolant ? cell(*p.T_coolant) : std::string());
      out += "\n";
    }
  }
  return out;
}

std::string paths_csv(const TrainResult& result) {
  std::string out = "curve,stage,T_K,conversion\n";
  for (const auto& r : result.stages)
    for (const auto& p : r.profile)
      out += fmt::format("path,{},{},{}\n", r.id, cell(p.T), cell(p.X));
  for (const auto& p : result.equilibrium_curve)
    out += fmt::format("equilibrium,,{},{}\n", cell(p.T), cell(p.X_eq));
  for (const auto& p : result.max_rate_locus)
    out += fmt::format("max_rate,,{},{}\n", cell(p.T), cell(p.X));
  return out;
}

std::string levenspiel_csv(const TrainResult& result) {
  std::string out = "stage,unit,conversion,F_key_feed_over_minus_r,area\n";
  for (const auto& c : result.levenspiel) {
    const char* unit = c.catalyst_basis ? "kg" : "m3";
    for (const auto& p : c.points)
      out += fmt::format("{},{},{},{},\n", c.stage, unit, cell(p.X), cell(p.inverse_rate));
    out += fmt::format("{},{},,,{}\n", c.stage, unit, cell(c.area));
  }
  return out;
}

}  // namespace rxtrain
