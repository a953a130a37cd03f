// The optimal bed layout (design.hpp) as a report page: the optimum's beds,
// exchangers, active constraints and gains (the same numbers and formatting
// routines as the terminal table), the optimum's path over the equilibrium
// curve, its profiles, and the beds-against-catalyst trade-off when several
// bed counts were optimized.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/report/figures.hpp"
#include "rxtrain/report/html_page.hpp"
#include "rxtrain/studies/optimize.hpp"

namespace rxtrain {

// Draws the optimum's train (d.train, run by optimize_design with
// DesignOptions::equilibrium_views on): T-X diagram, profiles, and with
// by_bed_count the total catalyst (or volume) and the interstage duty
// against the number of beds. Runs no solver.
std::vector<Figure> optimize_figures(const Case& c, const DesignResult& d);

std::string optimize_report_html(const Case& c, const DesignResult& d,
                                 const std::vector<Figure>& figures,
                                 const ReportProvenance& provenance);

}  // namespace rxtrain
