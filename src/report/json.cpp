#include "rxtrain/report/json.hpp"

#include <cmath>
#include <optional>

#include "rxtrain/report/caution.hpp"

namespace rxtrain {

namespace {

using nlohmann::json;

// A non-finite number never reaches the output: it becomes null.
json number(double v) { return std::isfinite(v) ? json(v) : json(nullptr); }
json number(const std::optional<double>& v) { return v ? number(*v) : json(nullptr); }

json flows(const std::vector<std::string>& ids, const std::vector<double>& F) {
  json o = json::object();
  for (std::size_t i = 0; i < ids.size() && i < F.size(); ++i) o[ids[i]] = number(F[i]);
  return o;
}

json stream(const std::vector<std::string>& ids, const Stream& s) {
  return {{"T", number(s.T)}, {"P", number(s.P)}, {"flows", flows(ids, s.F)}};
}

json profile(const std::vector<std::string>& ids, const StageResult& r) {
  json V = json::array(), T = json::array(), X = json::array();
  std::vector<json> F(ids.size(), json::array());
  for (const auto& p : r.profile) {
    V.push_back(number(p.V));
    T.push_back(number(p.T));
    X.push_back(number(p.X));
    for (std::size_t i = 0; i < ids.size() && i < p.F.size(); ++i) F[i].push_back(number(p.F[i]));
  }
  json flows_by_id = json::object();
  for (std::size_t i = 0; i < ids.size(); ++i) flows_by_id[ids[i]] = F[i];
  return {{"V", V}, {"T", T}, {"X", X}, {"flows", flows_by_id}};
}

json stage(const std::vector<std::string>& ids, const StageResult& r) {
  json s;
  s["id"] = r.id;
  s["type"] = stage_kind_name(r.kind);
  s["heat"] = r.heat ? json(heat_mode_name(*r.heat)) : json(nullptr);
  s["sized"] = r.sized;
  s["volume"] = number(r.volume);
  s["catalyst_mass"] = number(r.catalyst_mass);
  s["bulk_density"] = number(r.bulk_density);
  s["space_time"] = number(r.space_time);
  s["space_velocity"] = number(r.space_velocity);
  s["ghsv"] = number(r.ghsv);
  s["whsv"] = number(r.whsv);
  s["lhsv"] = number(r.lhsv);
  s["duty"] = number(r.duty);
  s["T_max"] = number(r.T_max);
  s["T_min"] = number(r.T_min);
  s["conversion"] = number(r.conversion);
  s["inlet"] = stream(ids, r.inlet);
  s["outlet"] = stream(ids, r.outlet);
  json states = json::array();
  for (const auto& ss : r.steady_states)
    states.push_back(
        {{"T", number(ss.T)}, {"conversion", number(ss.X)}, {"flows", flows(ids, ss.F)}});
  s["steady_states"] = r.kind == StageKind::Cstr ? states : json(nullptr);
  s["profile"] = profile(ids, r);
  s["solver"] = {{"steps", r.stats.steps},
                 {"rhs_evals", r.stats.rhs_evals},
                 {"jac_evals", r.stats.jac_evals},
                 {"newton_iters", r.stats.newton_iters},
                 {"error_test_fails", r.stats.error_test_fails},
                 {"message", r.stats.message}};
  s["warnings"] = r.warnings;
  if (r.equilibrium) {
    const auto& e = *r.equilibrium;
    s["equilibrium"] = {{"X_ad_eq", number(e.X_ad_eq)},
                        {"T_ad_eq", number(e.T_ad_eq)},
                        {"X_eq_out", number(e.X_eq_out)},
                        {"approach_X", number(e.approach_X)},
                        {"approach_T", number(e.approach_T)},
                        {"approach_T_beyond_window", e.approach_T_beyond_window},
                        {"approach_T_window", number(e.approach_T_window)}};
  } else {
    s["equilibrium"] = nullptr;
  }
  json path = json::array();
  for (const auto& p : r.profile) path.push_back({{"T", number(p.T)}, {"X", number(p.X)}});
  s["path"] = path;
  return s;
}

}  // namespace

nlohmann::json to_json(const TrainResult& result) {
  json j;
  j["title"] = result.title;
  j["species"] = result.species;
  j["key"] = result.key;
  j["feed"] = stream(result.species, result.feed);
  j["conversion"] = number(result.conversion);
  json stages = json::array();
  for (const auto& r : result.stages) stages.push_back(stage(result.species, r));
  j["stages"] = stages;
  j["outlet"] = stream(result.species, result.outlet);
  json curve = json::array();
  for (const auto& p : result.equilibrium_curve)
    curve.push_back({{"T", number(p.T)}, {"X_eq", number(p.X_eq)}});
  j["equilibrium_curve"] = curve;
  json locus = json::array();
  for (const auto& p : result.max_rate_locus)
    locus.push_back({{"X", number(p.X)}, {"T_opt", number(p.T)}});
  j["max_rate_locus"] = locus;
  json lev = json::array();
  for (const auto& c : result.levenspiel) {
    json points = json::array();
    for (const auto& p : c.points)
      points.push_back({{"X", number(p.X)}, {"inverse_rate", number(p.inverse_rate)}});
    lev.push_back({{"stage", c.stage},
                   {"basis", c.catalyst_basis ? "catalyst" : "volume"},
                   {"rectangle", c.rectangle},
                   {"X_in", number(c.X_in)},
                   {"X_out", number(c.X_out)},
                   {"area", number(c.area)},
                   {"points", points}});
  }
  j["levenspiel"] = lev;
  j["warnings"] = result.warnings;
  j["caution"] = kCaution;
  return j;
}

std::string json_text(const TrainResult& result) { return to_json(result).dump(2) + "\n"; }

}  // namespace rxtrain
