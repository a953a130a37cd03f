// Reports of the cooling options side by side (studies/cooling_options.hpp).
//
// format_cooling_options: one row per option (best feasible first), then
// why each infeasible or skipped option is so and how each was found, the
// warnings and the caution. °C with two decimals, conversions with four,
// catalyst kg, heat kW, areas m2.
//
// cooling_options_json / _text: SI only.
//   {"title", "key", "target", "limits": {"T_max", "T_in_min"}, "feed_T", "quench_T",
//    "policy": {"approach", "max_beds"},
//    "options": [{"kind": "intercooled"|"quench"|"cooled", "feasible", "reason" (null when
//                 feasible), "beds", "tubes", "catalyst_mass", "heat_removed", "area",
//                 "T_peak", "margin_to_T_max", "coolant_T", "conversion",
//                 "shares" ([] but for quench), "tube_diameter", "U", "volume",
//                 "path": [{"T", "X"}] (every stage of its train in order)}],
//    "warnings", "caution"}
// best feasible first; a value that does not apply is null.
//
// cooling_options_figures / _html: the three paths on one temperature–
// conversion diagram (over the intercooled train's equilibrium curve, run
// with the staging options' equilibrium views), and the page.
#pragma once

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/report/figures.hpp"
#include "rxtrain/report/html_page.hpp"
#include "rxtrain/studies/cooling_options.hpp"

namespace rxtrain {

// Why option `o` is infeasible or skipped, in words ("" when feasible).
std::string cooling_reason_text(const CoolingOptionsResult& r, const CoolingOption& o);

std::string format_cooling_options(const CoolingOptionsResult& r);
nlohmann::json cooling_options_json(const CoolingOptionsResult& r);
std::string cooling_options_json_text(const CoolingOptionsResult& r);

std::vector<Figure> cooling_options_figures(const Case& c, const CoolingOptionsResult& r);
std::string cooling_options_html(const Case& c, const CoolingOptionsResult& r,
                                 const std::vector<Figure>& figures,
                                 const ReportProvenance& provenance);

}  // namespace rxtrain
