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

// Runs the optimum's train (design_train) with the equilibrium views on and
// draws it: T-X diagram, profiles, and with by_bed_count the total catalyst
// (or volume) and the interstage duty against the number of beds. `views`
// sets the solvers and the equilibrium curve's resolution.
std::vector<Figure> optimize_figures(const Case& c, const DesignResult& d,
                                     const TrainOptions& views = {});

std::string optimize_report_html(const Case& c, const DesignResult& d,
                                 const std::vector<Figure>& figures,
                                 const ReportProvenance& provenance);

}  // namespace rxtrain
