// The report an engineer can hand on: one self-contained HTML file (inline
// CSS and SVG, no script, nothing fetched) that is also well-formed XML, so
// any XML parser can check it. Numbers use the same formatting routines as
// the terminal table (text_format.hpp).
#pragma once

#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/report/figures.hpp"
#include "rxtrain/report/html_page.hpp"

namespace rxtrain {

// A run's report: the stage table, outlet, space velocities, streams, the
// figures, warnings and inputs.
std::string run_report_html(const Case& c, const TrainResult& r, const std::vector<Figure>& figures,
                            const ReportProvenance& provenance);

}  // namespace rxtrain
