// Reports of the layout comparison (compare.hpp).
//
// format_compare_table: the terminal table, best first, the case's own
// layout marked with '*', what moved against the case, each layout's peak
// temperature (marked '!' above the heat-capacity data, with a line under
// the table naming the ranks that do), infeasible layouts last with their
// reason.
//
// compare_json_text: SI only, best first:
//   {"case_order": [ids], "ranked_by": str,
//    "thermo_ceiling": {"T": K, "species": str|null, "default": bool},
//    "layouts": [{"order": [ids], "orders": [[ids]...] (every order giving
//                 this train, "order" first), "moved": [{"stage", "from",
//                 "to"}] (reactor positions from 1), "heat":
//                 "as-written"|"adiabatic"|"isothermal", "case_layout",
//                 "feasible", "reason": str|null, "total_volume",
//                 "total_catalyst", "conversion", "T_peak" (K),
//                 "beyond_thermo_data": bool}]}
// A value that does not apply (or is not finite) is null.
//
// compare_figure / compare_report_html: the bar chart of the ranking
// quantity per layout (total volume or catalyst when stages are sized,
// final conversion when they have volumes) and the report page.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/report/figures.hpp"
#include "rxtrain/report/html_page.hpp"
#include "rxtrain/studies/compare.hpp"

namespace rxtrain {

std::string format_compare_table(const CompareResult& r);
std::string compare_json_text(const CompareResult& r);

// "R1 > R2" for the order of a layout.
std::string layout_order_text(const Layout& l);
// What moved against the case's order: "none", "R2 and R3 swapped",
// "R3 moved to the front", "R1 moved between R2 and R3", or each moved
// stage's new place ("R3 to 1st, R1 to 2nd, R2 to 3rd").
std::string layout_moves_text(const Layout& l, const std::vector<std::string>& case_order);
// Why an infeasible layout is so, in words ("" when feasible): its
// stages past the limits, the conversion it gives back, or the error that
// stopped it.
std::string compare_reason_text(const Layout& l);

Figure compare_figure(const CompareResult& r);
std::string compare_report_html(const Case& c, const CompareResult& r,
                                const std::vector<Figure>& figures,
                                const ReportProvenance& provenance);

}  // namespace rxtrain
