// The report an engineer can hand on: one self-contained HTML file (inline
// CSS and SVG, no script, nothing fetched) that is also well-formed XML, so
// any XML parser can check it. Numbers use the same formatting routines as
// the terminal table (text_format.hpp).
#pragma once

#include <string>
#include <vector>

#include "rxtrain/case.hpp"
#include "rxtrain/report/figures.hpp"
#include "rxtrain/train.hpp"

namespace rxtrain {

// What the report says about where it came from.
struct ReportProvenance {
  std::string case_file;    // as passed on the command line
  std::string case_sha256;  // of the case file's bytes
  std::string date;         // ISO 8601, UTC
  std::string version;      // rxtrain version
};

std::string run_report_html(const Case& c, const TrainResult& r, const std::vector<Figure>& figures,
                            const ReportProvenance& provenance);

// Today's date (UTC) as YYYY-MM-DD.
std::string utc_date_today();

}  // namespace rxtrain
