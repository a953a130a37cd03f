// The outputs of `rxtrain stability`: the terminal text (turning points,
// hysteresis window, branches), JSON in the shape issue 20 fixes, a CSV of
// every point, and the report page with the S-shaped curve (stable
// branches solid, unstable dashed). For a tubular bed (r.tubular): the
// critical value and the case's margin, the sensitivity at the grid's
// points, and S and the peak temperature drawn against the field.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/analysis/stability.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/report/figures.hpp"
#include "rxtrain/report/html_page.hpp"

namespace rxtrain {

std::string stability_text(const std::string& title, const StabilityResult& r);
// {"param", "unit", "branches": [{"stable", "points": [{"value", "T",
// "conversion"}]}], "turning_points": [{"kind", "value", "T"}],
// "sensitivity": [{"value", "T_peak", "S", "S_error", "checked"}],
// "critical": {"value", "margin", "S", "T_peak", "beyond"} or null}, SI;
// a tank's sensitivity is empty, a bed's branches and turning points.
std::string stability_json_text(const StabilityResult& r);
// branch,stable,kind,value,T_K,conversion: one row per point, SI; a
// tubular bed's: value,T_peak_K,S,S_error,checked.
std::string stability_csv_text(const StabilityResult& r);
// The S-curve: the tank's temperature against the field (°C for
// temperatures), stable solid, unstable dashed, turning points marked.
Figure stability_figure(const StabilityResult& r);
// The heat-generation and heat-removal curves at the case's values (kW
// against °C), crossing at the steady states; the S-curve figure alone
// where the tank has none (isothermal). A tubular bed: S, then its peak
// temperature, against the field, the critical and the case's values
// marked.
std::vector<Figure> stability_figures(const StabilityResult& r);
std::string stability_report_html(const Case& c, const StabilityResult& r,
                                  const std::vector<Figure>& figures,
                                  const ReportProvenance& provenance);

}  // namespace rxtrain
