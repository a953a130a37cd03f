// Reports of the layout comparison (compare.hpp).
//
// format_compare_table: the terminal table, best first, the case's own
// layout marked with '*', infeasible layouts last with their reason.
//
// compare_json_text: SI only, best first:
//   {"layouts": [{"order": [ids], "heat": "as-written"|"adiabatic"|"isothermal",
//                 "case_layout", "feasible", "reason": str|null, "total_volume",
//                 "total_catalyst", "conversion", "T_max"}]}
// A value that does not apply (or is not finite) is null.
//
// compare_figure / compare_report_html: the bar chart of the ranking
// quantity per layout (total volume or catalyst when stages are sized,
// final conversion when they have volumes) and the report page.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/studies/compare.hpp"
#include "rxtrain/report/figures.hpp"
#include "rxtrain/report/html_page.hpp"

namespace rxtrain {

std::string format_compare_table(const CompareResult& r);
std::string compare_json_text(const CompareResult& r);

// "R1 > R2" for the order of a layout.
std::string layout_order_text(const Layout& l);

Figure compare_figure(const CompareResult& r);
std::string compare_report_html(const Case& c, const CompareResult& r,
                                const std::vector<Figure>& figures,
                                const ReportProvenance& provenance);

}  // namespace rxtrain
