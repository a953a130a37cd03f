// The interstage-cooling check (staging.hpp) as a report page: the answer
// in plain words, the train as given, the staged beds and their exchangers
// (the same numbers and formatting routines as the terminal report), the
// figures, warnings and inputs.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/report/figures.hpp"
#include "rxtrain/report/html_page.hpp"
#include "rxtrain/studies/staging.hpp"

namespace rxtrain {

// T–X diagrams of the staged beds and of the train as given (each over the
// equilibrium curve, with T_max and the target), then the temperature and
// conversion profiles of the staged beds, from the result's trains (run by
// run_staging with StagingOptions::equilibrium_views on). Runs no solver.
std::vector<Figure> staging_figures(const Case& c, const StagingResult& r);

std::string staging_report_html(const Case& c, const StagingResult& r,
                                const std::vector<Figure>& figures,
                                const ReportProvenance& provenance);

}  // namespace rxtrain
