// The parts every rxtrain report page shares (run, staging, compare,
// optimize, sweep): the page frame with its provenance and caution, table
// cells, the figures, warnings and inputs sections. Pages are XHTML: one
// self-contained file (inline CSS and SVG, no script, nothing fetched) that
// any XML parser reads. Text is escaped here; callers pass plain text.
//
// Example:
//   std::string h = html::page_begin("SO2 converter", provenance);
//   h += "<h2 id=\"summary\">Beds</h2>\n" + my_table;
//   h += html::figures_section(figures) + html::warnings_section(warnings);
//   h += html::page_end();
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/figures.hpp"

namespace rxtrain {

// What a report says about where it came from.
struct ReportProvenance {
  std::string case_file;    // as passed on the command line
  std::string case_sha256;  // of the case file's bytes
  std::string date;         // ISO 8601, UTC
  std::string version;      // rxtrain version
};

// Today's date (UTC) as YYYY-MM-DD.
std::string utc_date_today();

// Provenance of a case file: its bytes hashed (SHA-256), today's date and
// this build's version. Throws OutputError when the file cannot be read
// again (it was just loaded, so only a race gets there).
ReportProvenance provenance_of(const std::string& case_file, const std::string& version);

// Queues a report folder in `out`: DIR/report.html and each figure as
// DIR/<name>.svg (written when `out` commits, all or nothing).
void add_report_files(OutputSet& out, const std::filesystem::path& dir, const std::string& page,
                      const std::vector<Figure>& figures);

namespace html {

// <!DOCTYPE ...> through the caution box: title, case file, SHA-256,
// version, date. `heading` is the page's h1; the document title too.
std::string page_begin(const std::string& heading, const ReportProvenance& provenance);
// Closes what page_begin opened.
std::string page_end();

// One <td>, text escaped; numeric cells are right-aligned and do not wrap.
std::string cell(const std::string& text, bool numeric);
// A temperature cell: °C on top, K below, both with two decimals.
std::string temperature_cell(double T);
// A row of <th> headers, escaped.
std::string header_row(const std::vector<std::string>& heads);

// "Figures" heading and each figure inline with its caption; the figure's
// name is its anchor.
std::string figures_section(const std::vector<Figure>& figures);
// "Warnings" heading and a list ("None." when empty).
std::string warnings_section(const std::vector<std::string>& warnings);
// What the case asks: the feed (T, P, total flow, each species' flow and
// mole fraction), the key species, the train-level target and the
// catalyst's temperature limits ("not given" where the case has none).
std::string feed_section(const Case& c);
// The case's species and reactions (rate laws written out, SI).
std::string inputs_section(const Case& c);

}  // namespace html
}  // namespace rxtrain
