#include <cmath>

#include "rxtrain/report/caution.hpp"
#include "rxtrain/report/staging_report.hpp"

namespace rxtrain {

namespace {

using nlohmann::json;

// Never a NaN or inf in the output: null instead.
json num(double v) { return std::isfinite(v) ? json(v) : json(nullptr); }
json num(const std::optional<double>& v) { return v ? num(*v) : json(nullptr); }
json text_or_null(const std::string& s) { return s.empty() ? json(nullptr) : json(s); }

json path_of(const StagingResult& r, const std::string& id) {
  json path = json::array();
  for (const auto& st : r.staged_run.stages)
    if (st.id == id)
      for (const auto& p : st.profile) path.push_back({{"T", num(p.T)}, {"X", num(p.X)}});
  return path;
}

}  // namespace

json staging_json(const StagingResult& r) {
  json j;
  j["title"] = r.title;
  j["key"] = r.key;
  j["target"] = num(r.target);
  j["limits"] = {{"T_max", num(r.limits.T_max)}, {"T_in_min", num(r.limits.T_in_min)}};
  j["reaction"] = r.exothermic ? "exothermic" : "endothermic";
  j["dT_ad"] = num(r.dT_ad);
  j["reachable"] = r.reachable;
  j["limited_by"] = text_or_null(limit_name(r.limited_by));
  j["limiting_stage"] = text_or_null(r.limiting_stage);
  j["why"] = r.why;
  j["limit_point"] = r.limit_point ? json{{"X", num(r.limit_point->X)},
                                          {"V", num(r.limit_point->V)},
                                          {"T", num(r.limit_point->T)},
                                          {"beyond_bed", r.limit_point->beyond_bed}}
                                   : json(nullptr);
  j["volume_needed"] = num(r.volume_needed);
  j["as_given_conversion"] = num(r.as_given_conversion);
  json given = json::array();
  for (const auto& a : r.as_given)
    given.push_back({{"id", a.id},
                     {"type", stage_kind_name(a.kind)},
                     {"ran", a.ran},
                     {"T_in", num(a.T_in)},
                     {"T_out", a.ran ? num(a.T_out) : json(nullptr)},
                     {"T_max", a.ran ? num(a.T_max) : json(nullptr)},
                     {"T_min", a.ran ? num(a.T_min) : json(nullptr)},
                     {"X_in", num(a.X_in)},
                     {"X_out", a.ran ? num(a.X_out) : json(nullptr)},
                     {"volume", num(a.volume)},
                     {"X_ad_eq", num(a.X_ad_eq)},
                     {"T_ad_eq", num(a.T_ad_eq)},
                     {"note", text_or_null(a.note)}});
  j["as_given"] = given;
  j["target_reached"] = r.target_reached;
  j["beds_needed"] = r.target_reached ? json(r.beds_needed) : json(nullptr);
  j["staged_conversion"] = num(r.staged_conversion);
  j["conversion_limit"] = num(r.conversion_limit);
  j["staged_note"] = r.staged_note;
  j["policy"] = {
      {"approach", num(r.approach)},
      {"return_to", return_to_name(r.return_to)},
      {"min_return", r.return_to == ReturnTo::MaxRate ? num(r.min_return) : json(nullptr)},
      {"max_beds", r.max_beds}};
  json beds = json::array();
  for (const auto& b : r.beds)
    beds.push_back({{"id", b.id},
                    {"T_in", num(b.T_in)},
                    {"T_out", num(b.T_out)},
                    {"X_in", num(b.X_in)},
                    {"X_out", num(b.X_out)},
                    {"volume", num(b.volume)},
                    {"catalyst_mass", num(b.catalyst_mass)},
                    {"T_max", num(b.T_max)},
                    {"T_min", num(b.T_min)},
                    {"X_ad_eq", num(b.X_ad_eq)},
                    {"T_ad_eq", num(b.T_ad_eq)},
                    {"ended_by", b.ended_by},
                    {"path", path_of(r, b.id)}});
  j["beds"] = beds;
  json coolers = json::array();
  for (const auto& x : r.coolers)
    coolers.push_back(
        {{"id", x.id}, {"T_in", num(x.T_in)}, {"T_out", num(x.T_out)}, {"duty", num(x.duty)}});
  j["coolers"] = coolers;
  j["warnings"] = r.warnings;
  j["caution"] = kCaution;
  return j;
}

std::string staging_json_text(const StagingResult& r) { return staging_json(r).dump(2) + "\n"; }

}  // namespace rxtrain
