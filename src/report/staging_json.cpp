#include <cmath>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/json_number.hpp"
#include "rxtrain/report/json.hpp"
#include "rxtrain/report/staging_report.hpp"

namespace rxtrain {

namespace {

using nlohmann::json;

// Never a NaN or inf in the output: null instead.
json text_or_null(const std::string& s) { return s.empty() ? json(nullptr) : json(s); }

// LIMIT (report/json.hpp) of stage `id` of `run`, or null.
json limit_of(const TrainResult& run, const std::string& id) {
  for (const auto& st : run.stages)
    if (st.id == id) return limit_json(run.limit_check, st);
  return nullptr;
}

// The staged bed built as the case's first reactor (its bed, pellet and
// viscosity): its length, pressure drop and outlet pressure; null where
// the first reactor has no bed (or no pressure drop).
const StageResult* staged_stage(const StagingResult& r, const std::string& id) {
  for (const auto& st : r.staged_run.stages)
    if (st.id == id) return &st;
  return nullptr;
}
json bed_length_of(const StagingResult& r, const std::string& id) {
  const StageResult* st = staged_stage(r, id);
  return st && st->hydraulics ? json_number(st->hydraulics->length) : json(nullptr);
}
json bed_dP_of(const StagingResult& r, const std::string& id) {
  const StageResult* st = staged_stage(r, id);
  return st && st->hydraulics && st->hydraulics->dP ? json_number(*st->hydraulics->dP)
                                                    : json(nullptr);
}

json path_of(const StagingResult& r, const std::string& id) {
  json path = json::array();
  for (const auto& st : r.staged_run.stages)
    if (st.id == id)
      for (const auto& p : st.profile)
        path.push_back({{"T", json_number(p.T)}, {"X", json_number(p.X)}});
  return path;
}

}  // namespace

json staging_json(const StagingResult& r) {
  json j;
  j["title"] = r.title;
  j["key"] = r.key;
  j["target"] = json_number(r.target);
  j["limits"] = {{"T_max", json_number(r.limits.T_max)},
                 {"T_in_min", json_number(r.limits.T_in_min)}};
  j["reaction"] = r.exothermic ? "exothermic" : "endothermic";
  j["dT_ad"] = json_number(r.dT_ad);
  j["reachable"] = r.reachable;
  j["limited_by"] = text_or_null(limit_name(r.limited_by));
  j["limiting_stage"] = text_or_null(r.limiting_stage);
  j["why"] = as_given_answer_text(r);
  j["limit_point"] = r.limit_point ? json{{"X", json_number(r.limit_point->X)},
                                          {"V", json_number(r.limit_point->V)},
                                          {"T", json_number(r.limit_point->T)},
                                          {"beyond_bed", r.limit_point->beyond_bed}}
                                   : json(nullptr);
  j["volume_needed"] = json_number(r.volume_needed);
  j["as_given_conversion"] = json_number(r.as_given_conversion);
  json given = json::array();
  for (const auto& a : r.as_given)
    given.push_back({{"id", a.id},
                     {"type", stage_kind_name(a.kind)},
                     {"ran", a.ran},
                     {"T_in", json_number(a.T_in)},
                     {"T_out", a.ran ? json_number(a.T_out) : json(nullptr)},
                     {"T_peak", a.ran ? json_number(a.T_max) : json(nullptr)},
                     {"T_min", a.ran ? json_number(a.T_min) : json(nullptr)},
                     {"X_in", json_number(a.X_in)},
                     {"X_out", a.ran ? json_number(a.X_out) : json(nullptr)},
                     {"volume", json_number(a.volume)},
                     {"X_ad_eq", json_number(a.X_ad_eq)},
                     {"T_ad_eq", json_number(a.T_ad_eq)},
                     {"note", text_or_null(stage_note_text(r, a))},
                     {"limit", limit_of(r.as_given_run, a.id)}});
  j["as_given"] = given;
  j["target_reached"] = r.target_reached;
  j["beds_needed"] = r.target_reached ? json(r.beds_needed) : json(nullptr);
  j["staged_conversion"] = json_number(r.staged_conversion);
  j["conversion_limit"] = json_number(r.conversion_limit);
  j["staged_note"] = staged_answer_text(r);
  j["policy"] = {
      {"approach", json_number(r.approach)},
      {"return_to", return_to_name(r.return_to)},
      {"min_return", r.return_to == ReturnTo::MaxRate ? json_number(r.min_return) : json(nullptr)},
      {"max_beds", r.max_beds}};
  json beds = json::array();
  for (const auto& b : r.beds)
    beds.push_back({{"id", b.id},
                    {"T_in", json_number(b.T_in)},
                    {"T_out", json_number(b.T_out)},
                    {"X_in", json_number(b.X_in)},
                    {"X_out", json_number(b.X_out)},
                    {"volume", json_number(b.volume)},
                    {"catalyst_mass", json_number(b.catalyst_mass)},
                    {"T_peak", json_number(b.T_max)},
                    {"T_min", json_number(b.T_min)},
                    {"X_ad_eq", json_number(b.X_ad_eq)},
                    {"T_ad_eq", json_number(b.T_ad_eq)},
                    {"ended_by", b.ended_by},
                    {"length", bed_length_of(r, b.id)},
                    {"dP", bed_dP_of(r, b.id)},
                    {"path", path_of(r, b.id)},
                    {"limit", limit_of(r.staged_run, b.id)}});
  j["beds"] = beds;
  json coolers = json::array();
  for (const auto& x : r.coolers)
    coolers.push_back({{"id", x.id},
                       {"T_in", json_number(x.T_in)},
                       {"T_out", json_number(x.T_out)},
                       {"duty", json_number(x.duty)}});
  j["coolers"] = coolers;
  j["warnings"] = r.warnings;
  j["caution"] = kCaution;
  return j;
}

std::string staging_json_text(const StagingResult& r) { return staging_json(r).dump(2) + "\n"; }

}  // namespace rxtrain
