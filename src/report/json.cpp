#include "rxtrain/report/json.hpp"

#include <cmath>
#include <optional>

#include "rxtrain/analysis/result_fields.hpp"
#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/json_number.hpp"

namespace rxtrain {

namespace {

using nlohmann::json;

// A non-finite number never reaches the output: it becomes null.

json flows(const std::vector<std::string>& ids, const std::vector<double>& F) {
  json o = json::object();
  for (std::size_t i = 0; i < ids.size() && i < F.size(); ++i) o[ids[i]] = json_number(F[i]);
  return o;
}

// Molar flows, mole fractions and, with molar masses, mass flows and their
// total (null without).
json stream(const std::vector<std::string>& ids, const std::vector<double>& molar_mass,
            const Stream& s) {
  const auto m = species_mass_flows(s, molar_mass);
  const auto total = mass_flow(s, molar_mass);
  return {{"T", json_number(s.T)},
          {"P", json_number(s.P)},
          {"flows", flows(ids, s.F)},
          {"total_flow", json_number(s.total_flow())},
          {"x", flows(ids, mole_fractions(s))},
          {"mass_flows", m ? flows(ids, *m) : json(nullptr)},
          {"mass_flow", total ? json_number(*total) : json(nullptr)}};
}

// The units of every number in the output: SI, with the one exception
// named (space velocities per hour, as the trade quotes them).
json units_json(const std::vector<std::string>& reactions) {
  json u = {{"P", "Pa"},
            {"flows", "mol/s"},
            {"total_flow", "mol/s"},
            {"mass_flows", "kg/s"},
            {"mass_flow", "kg/s"},
            {"mass_balance", "1, (in - out) / in"},
            {"catalyst_mass", "kg"},
            {"bulk_density", "kg/m3"},
            {"space_time", "s"},
            {"space_velocity", "1/s"},
            {"ghsv", "1/h"},
            {"whsv", "1/h"},
            {"lhsv", "1/h"},
            {"duty", "W"},
            {"inverse_rate", "kg*s/mol or m3*s/mol, by the curve's basis"},
            {"area",
             "m2 for an exchanger or a cooled stage's tube wall; kg or m3 for a Levenspiel "
             "curve, by its basis"},
            {"flow", "kg/s (a utility's mass flow)"},
            {"dP", "Pa"},
            {"mass_flux", "kg/(m2*s)"},
            {"velocity_in", "m/s"},
            {"velocity_out", "m/s"},
            {"reynolds_particle", "1"},
            {"flow_area", "m2"},
            {"void_fraction", "1"},
            {"tubes", "1"},
            {"U", "W/(m2*K)"},
            {"z", "m"},
            {"V_dT_max", "m3"},
            {"share", "1"}};
  for (const char* k : {"diameter", "tube_diameter", "length", "particle_diameter"}) u[k] = "m";
  for (const char* k : {"T", "T_peak", "T_max", "T_min", "T_in_min", "T_opt", "T_ad_eq",
                        "T_at_X_max", "T_end", "limit", "T_in", "T_out", "T_coolant"})
    u[k] = "K";
  for (const char* k : {"approach_T", "approach_T_window", "margin", "by", "lmtd", "dT_max"})
    u[k] = "K (a difference)";
  for (const char* k : {"volume", "V", "V_at_X_max"}) u[k] = "m3";
  for (const char* k :
       {"conversion", "X", "X_eq", "X_eq_out", "X_in", "X_out", "X_ad_eq", "X_max", "X_end",
        "approach_X", "x", "activity", "yield", "selectivity", "effectiveness"})
    u[k] = "1";
  for (const auto& id : reactions) u["eta_" + id] = "1";
  u["rate"] = "mol/(kg*s) for a rate per catalyst, mol/(m3*s) per volume";
  return u;
}

json profile(const std::vector<std::string>& ids, const std::vector<std::string>& reactions,
             const StageResult& r) {
  json V = json::array(), T = json::array(), X = json::array();
  std::vector<json> F(ids.size(), json::array());
  for (const auto& p : r.profile) {
    V.push_back(json_number(p.V));
    T.push_back(json_number(p.T));
    X.push_back(json_number(p.X));
    for (std::size_t i = 0; i < ids.size() && i < p.F.size(); ++i)
      F[i].push_back(json_number(p.F[i]));
  }
  json flows_by_id = json::object();
  for (std::size_t i = 0; i < ids.size(); ++i) flows_by_id[ids[i]] = F[i];
  json out = {{"V", V}, {"T", T}, {"X", X}, {"flows", flows_by_id}};
  // The local pressure of a bed with a pressure drop (null: the stage runs
  // at its inlet's pressure).
  if (r.hydraulics && r.hydraulics->dP) {
    json P = json::array();
    for (const auto& p : r.profile) P.push_back(p.P ? json_number(*p.P) : json());
    out["P"] = P;
  } else {
    out["P"] = nullptr;
  }
  // A cooled stage: the coolant's temperature (null: not cooled).
  if (r.coolant) {
    json Tc = json::array();
    for (const auto& p : r.profile) Tc.push_back(json_number(p.T_coolant));
    out["T_coolant"] = Tc;
  } else {
    out["T_coolant"] = nullptr;
  }
  // With effectiveness factors: "eta_REACTION" per reaction.
  if (!r.effectiveness.empty())
    for (std::size_t j = 0; j < reactions.size(); ++j) {
      json eta = json::array();
      for (const auto& p : r.profile)
        eta.push_back(j < p.eta.size() ? json_number(p.eta[j]) : json());
      out["eta_" + reactions[j]] = eta;
    }
  return out;
}

// Per wanted product: its yield and its selectivity (null where nothing of
// the key has been converted); both null for a case without products.
json product_values(const std::vector<std::string>& products, const std::vector<double>& values) {
  if (products.empty()) return nullptr;
  return flows(products, values);
}
json product_values(const std::vector<std::string>& products,
                    const std::vector<std::optional<double>>& values) {
  if (products.empty()) return nullptr;
  json o = json::object();
  for (std::size_t k = 0; k < products.size() && k < values.size(); ++k)
    o[products[k]] = values[k] ? json_number(*values[k]) : json(nullptr);
  return o;
}

// A bed's geometry and flow (null where the stage has no bed or tubes).
void add_hydraulics(json& s, const StageResult& r) {
  const auto& h = r.hydraulics;
  if (!h) {
    s["geometry"] = nullptr;
    for (const char* k : {"dP", "mass_flux", "velocity_in", "velocity_out", "reynolds_particle"})
      s[k] = nullptr;
    return;
  }
  const bool tubes = h->geometry.tubes > 0;
  s["geometry"] = {{"diameter", tubes ? json() : json_number(h->geometry.diameter)},
                   {"tubes", tubes ? json(h->geometry.tubes) : json()},
                   {"tube_diameter", tubes ? json_number(h->geometry.diameter) : json()},
                   {"flow_area", json_number(h->flow_area)},
                   {"length", json_number(h->length)},
                   {"void_fraction", json_number(h->geometry.void_fraction)},
                   {"particle_diameter", json_number(h->particle_diameter)}};
  s["dP"] = json_number(h->dP);
  s["mass_flux"] = json_number(h->mass_flux);
  s["velocity_in"] = json_number(h->velocity_in);
  s["velocity_out"] = json_number(h->velocity_out);
  s["reynolds_particle"] = json_number(h->reynolds_particle);
}

json stage(const TrainResult& t, const StageResult& r) {
  const auto& ids = t.species;
  const auto& molar_mass = t.molar_mass;
  const auto& products = t.products;
  json s;
  s["id"] = r.id;
  s["type"] = stage_kind_name(r.kind);
  const char* heat = stage_heat_name(r);
  s["heat"] = heat ? json(heat) : json(nullptr);
  // A cooled stirred tank: its wall's UA (W/K) and the coolant's T (K).
  s["cooling"] = r.cooling ? json{{"UA", json_number(r.cooling->UA)},
                                  {"T_coolant", json_number(r.cooling->T_coolant)}}
                           : json(nullptr);
  s["sized"] = r.sized;
  // The outlet purity the stage was sized to (null: none).
  s["target_outlet"] =
      r.outlet_target
          ? json{{"species", ids.at(static_cast<std::size_t>(r.outlet_target->species))},
                 {"x", json_number(r.outlet_target->x)}}
          : json(nullptr);
  s["volume"] = json_number(r.volume);
  s["catalyst_mass"] = json_number(r.catalyst_mass);
  s["bulk_density"] = json_number(r.bulk_density);
  // Reactors only: the factor on every rate in the stage (1: as the case's
  // rate laws give them).
  s["activity"] = !is_reactor(r.kind) ? json(nullptr) : json_number(r.activity);
  s["space_time"] = json_number(r.space_time);
  s["space_velocity"] = json_number(r.space_velocity);
  s["ghsv"] = json_number(r.ghsv);
  s["whsv"] = json_number(r.whsv);
  s["lhsv"] = json_number(r.lhsv);
  s["space_velocity_basis"] = r.space_velocity_basis;
  s["duty"] = json_number(r.duty);
  // An exchanger given U and its utility: the counter-flow LMTD, the area
  // and the utility (its flow where its cp is given); null otherwise.
  s["lmtd"] = r.exchanger_size ? json_number(r.exchanger_size->lmtd) : json(nullptr);
  s["area"] = r.exchanger_size ? json_number(r.exchanger_size->area) : json(nullptr);
  s["utility"] = r.utility ? json{{"T_in", json_number(r.utility->T_in)},
                                  {"T_out", json_number(r.utility->T_out)},
                                  {"flow", r.exchanger_size && r.exchanger_size->utility_flow
                                               ? json_number(*r.exchanger_size->utility_flow)
                                               : json(nullptr)}}
                           : json(nullptr);
  // A cooled stage: its coolant (T_in, T_out in the coolant's own flow
  // direction; duty the heat added to the process stream) and its hot
  // spot; null otherwise.
  if (r.coolant) {
    const auto& c = *r.coolant;
    s["coolant"] = {
        {"T_in", json_number(c.T_in)},     {"T_out", json_number(c.T_out)},
        {"duty", json_number(c.duty)},     {"direction", coolant_flow_name(c.direction)},
        {"U", json_number(c.U)},           {"area", json_number(c.area)},
        {"dT_max", json_number(c.dT_max)}, {"V_dT_max", json_number(c.V_dT_max)}};
  } else {
    s["coolant"] = nullptr;
  }
  s["hot_spot"] = r.hot_spot ? json{{"T", json_number(r.hot_spot->T)},
                                    {"V", json_number(r.hot_spot->V)},
                                    {"z", json_number(r.hot_spot->z)}}
                             : json(nullptr);
  s["T_peak"] = json_number(r.T_max);  // the stage's hottest point; T_max is the limit
  s["T_min"] = json_number(r.T_min);
  s["conversion"] = json_number(r.conversion);
  s["yield"] = product_values(products, r.yield);
  s["selectivity"] = product_values(products, r.selectivity);
  // A quench: the side stream that joined and, where given, the share of
  // the feed it is; null otherwise.
  s["side_stream"] = r.side_stream ? stream(ids, molar_mass, *r.side_stream) : json(nullptr);
  s["share"] = json_number(r.share);
  s["inlet"] = stream(ids, molar_mass, r.inlet);
  s["outlet"] = stream(ids, molar_mass, r.outlet);
  const auto closure = mass_balance_closure(r.inlet, r.outlet, molar_mass);
  s["mass_balance"] = closure ? json_number(*closure) : json(nullptr);
  json states = json::array();
  for (const auto& ss : r.steady_states) {
    // Each state's stability: the eigenvalues (1/s) of the tank's dynamic
    // balances linearized there, [re, im] each (docs/stability.md).
    json eig = json::array();
    for (const auto& e : ss.eigenvalues)
      eig.push_back({json_number(e.real()), json_number(e.imag())});
    const bool known = !ss.eigenvalues.empty();
    states.push_back({{"T", json_number(ss.T)},
                      {"conversion", json_number(ss.X)},
                      {"flows", flows(ids, ss.F)},
                      {"outlet", ss.outlet},
                      {"stable", known ? json(ss.stable()) : json(nullptr)},
                      {"kind", known ? json(stability_kind_name(ss.kind)) : json(nullptr)},
                      {"eigenvalues", eig}});
  }
  s["steady_states"] = r.kind == StageKind::Cstr ? states : json(nullptr);
  // A reactor's mean rate of each reaction over it (its extent, read from
  // the flows, per kg of catalyst or per m3 by the rate's basis): what a
  // differential lab reactor measures. Null for other stages and for
  // dependent reactions, which flows cannot tell apart.
  if (const auto rates = mean_rates(t, r)) {
    json m = json::object();
    for (std::size_t j = 0; j < rates->size() && j < t.reactions.size(); ++j)
      m[t.reactions[j]] = json_number((*rates)[j]);
    s["rate"] = m;
  } else {
    s["rate"] = nullptr;
  }
  // An interchanger's side (only on interchangers): the exchange at the
  // state the stages describe.
  if (r.interchanger) {
    const InterchangerResult& x = *r.interchanger;
    s["interchanger"] = {{"hot_from", x.hot_from},
                         {"arrangement", flow_arrangement_name(x.arrangement)},
                         {"UA", json_number(x.UA)},
                         {"effectiveness", json_number(x.effectiveness)},
                         {"NTU", json_number(x.NTU)},
                         {"duty", json_number(x.duty)},
                         {"C_cold", json_number(x.C_cold)},
                         {"C_hot", json_number(x.C_hot)},
                         {"T_cold_in", json_number(x.T_cold_in)},
                         {"T_cold_out", json_number(x.T_cold_out)},
                         {"T_hot_in", json_number(x.T_hot_in)},
                         {"T_hot_out", json_number(x.T_hot_out)}};
  }
  s["profile"] = profile(ids, t.reactions, r);
  // Catalyst pellets with D_eff: each reaction's effectiveness factor over
  // the stage (null without).
  if (r.effectiveness.empty()) {
    s["effectiveness"] = nullptr;
  } else {
    json e = json::object();
    for (std::size_t j = 0; j < r.effectiveness.size() && j < t.reactions.size(); ++j)
      e[t.reactions[j]] = {{"min", json_number(r.effectiveness[j].min)},
                           {"max", json_number(r.effectiveness[j].max)},
                           {"outlet", json_number(r.effectiveness[j].outlet)}};
    s["effectiveness"] = e;
  }
  s["solver"] = {{"steps", r.stats.steps},
                 {"rhs_evals", r.stats.rhs_evals},
                 {"jac_evals", r.stats.jac_evals},
                 {"newton_iters", r.stats.newton_iters},
                 {"error_test_fails", r.stats.error_test_fails},
                 {"message", r.stats.message}};
  s["warnings"] = r.warnings;
  if (r.equilibrium) {
    const auto& e = *r.equilibrium;
    s["equilibrium"] = {{"X_ad_eq", json_number(e.X_ad_eq)},
                        {"T_ad_eq", json_number(e.T_ad_eq)},
                        {"X_eq_out", json_number(e.X_eq_out)},
                        {"approach_X", json_number(e.approach_X)},
                        {"approach_T", json_number(e.approach_T)},
                        {"approach_T_beyond_window", e.approach_T_beyond_window},
                        {"approach_T_window", json_number(e.approach_T_window)}};
  } else {
    s["equilibrium"] = nullptr;
  }
  if (r.reach) {
    const auto& h = *r.reach;
    s["reach"] = {{"X_max", json_number(h.X_max)},
                  {"V_at_X_max", json_number(h.V_at_X_max)},
                  {"T_at_X_max", json_number(h.T_at_X_max)},
                  {"X_end", json_number(h.X_end)},
                  {"T_end", json_number(h.T_end)},
                  {"end", reach_end_name(h.end)},
                  {"species", h.species >= 0 ? json(ids[h.species]) : json(nullptr)}};
  } else {
    s["reach"] = nullptr;
  }
  s["size_sensitivity"] = json_number(r.size_sensitivity);
  add_hydraulics(s, r);
  json path = json::array();
  for (const auto& p : r.profile)
    path.push_back({{"T", json_number(p.T)}, {"X", json_number(p.X)}});
  s["path"] = path;
  return s;
}

}  // namespace

namespace {

json finding_json(const LimitFinding& f, double margin) {
  return {{"stage", f.stage},
          {"kind", limit_finding_kind_name(f.kind)},
          {"bound", limit_bound_name(f.bound)},
          {"limit", json_number(f.limit)},
          {"T", json_number(f.T)},
          {"by", json_number(f.by)},
          {"at_inlet", f.at_inlet},
          {"V", json_number(f.V)},
          {"catalyst_mass", json_number(f.catalyst_mass)},
          {"message", limit_finding_text(f, margin)}};
}

}  // namespace

nlohmann::json limit_check_json(const LimitCheck& lc) {
  json findings = json::array();
  for (const auto& f : lc.findings) findings.push_back(finding_json(f, lc.margin));
  return {{"T_max", json_number(lc.T_max)},
          {"T_in_min", json_number(lc.T_in_min)},
          {"margin", json_number(lc.margin)},
          {"findings", findings}};
}

nlohmann::json limit_json(const LimitCheck& lc, const StageResult& r) {
  if (!lc.applies() || !is_reactor(r.kind)) return nullptr;
  json findings = json::array();
  for (const auto& f : lc.findings)
    if (f.stage == r.id) findings.push_back(finding_json(f, lc.margin));
  return {{"T_max", json_number(lc.T_max)},
          {"T_in_min", json_number(lc.T_in_min)},
          {"margin", json_number(lc.margin)},
          {"over_limit", json_number(lc.past(r.id))},
          {"findings", findings}};
}

nlohmann::json to_json(const TrainResult& result) {
  json j;
  j["title"] = result.title;
  j["species"] = result.species;
  j["key"] = result.key;
  j["units"] = units_json(result.reactions);
  j["feed"] = stream(result.species, result.molar_mass, result.feed);
  j["conversion"] = json_number(result.conversion);
  j["products"] = result.products;
  j["yield"] = product_values(result.products, result.yield);
  j["selectivity"] = product_values(result.products, result.selectivity);
  json stages = json::array();
  for (const auto& r : result.stages) {
    stages.push_back(stage(result, r));
    stages.back()["limit"] = limit_json(result.limit_check, r);
  }
  j["stages"] = stages;
  j["outlet"] = stream(result.species, result.molar_mass, result.outlet);
  json curve = json::array();
  for (const auto& p : result.equilibrium_curve)
    curve.push_back({{"T", json_number(p.T)}, {"X_eq", json_number(p.X_eq)}});
  j["equilibrium_curve"] = curve;
  json locus = json::array();
  for (const auto& p : result.max_rate_locus)
    locus.push_back({{"X", json_number(p.X)}, {"T_opt", json_number(p.T)}});
  j["max_rate_locus"] = locus;
  json lev = json::array();
  for (const auto& c : result.levenspiel) {
    json points = json::array();
    for (const auto& p : c.points)
      points.push_back({{"X", json_number(p.X)}, {"inverse_rate", json_number(p.inverse_rate)}});
    lev.push_back({{"stage", c.stage},
                   {"basis", c.catalyst_basis ? "catalyst" : "volume"},
                   {"rectangle", c.rectangle},
                   {"X_in", json_number(c.X_in)},
                   {"X_out", json_number(c.X_out)},
                   {"area", json_number(c.area)},
                   {"points", points}});
  }
  j["levenspiel"] = lev;
  // A train with an interchanger: its loop's steady states (only then).
  if (!result.loop_states.empty()) {
    json states = json::array();
    for (std::size_t k = 0; k < result.loop_states.size(); ++k) {
      const LoopState& s = result.loop_states[k];
      states.push_back({{"T_cold_out", json_number(s.T_cold_out)},
                        {"conversion", json_number(s.conversion)},
                        {"T_peak", json_number(s.T_peak)},
                        {"gain", json_number(s.gain)},
                        {"stable", s.stable()},
                        {"cold_start", static_cast<int>(k) == result.loop_cold_start}});
    }
    j["steady_states"] = states;
    j["loop_scan"] = {{"T_low", json_number(result.loop_T_low)},
                      {"T_high", json_number(result.loop_T_high)}};
  }
  j["warnings"] = result.warnings;
  j["caution"] = kCaution;
  return j;
}

std::string json_text(const TrainResult& result) { return to_json(result).dump(2) + "\n"; }

}  // namespace rxtrain
