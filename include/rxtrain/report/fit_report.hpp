// The outputs of `rxtrain fit`: the terminal text (estimates with their
// standard errors and 95 % intervals, correlations, residual SDs, notes),
// JSON in the shape issue 21 fixes, and the report page (parity plots,
// residuals against each input).
#pragma once

#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/fit/fit.hpp"
#include "rxtrain/report/figures.hpp"
#include "rxtrain/report/html_page.hpp"

namespace rxtrain {

std::string fit_text(const std::string& title, const fit::FitResult& r);
// {"parameters": [{"path", "scale", "estimate", "std_error", "ci95", "unit",
// "T_ref"}], "correlation", "covariance", "residual_sd": {OUTPUT: ...},
// "dof", "runs": [{"row", "inputs", "measured", "fitted", "residual",
// "weighted_residual"}], "converged", ...}; SI.
std::string fit_json_text(const fit::FitResult& r);
// A parity plot per output (fitted against measured, the 1:1 line) and
// the standardized residuals against each input.
std::vector<Figure> fit_figures(const fit::FitResult& r);
std::string fit_report_html(const Case& lab, const fit::FitResult& r,
                            const std::vector<Figure>& figures, const ReportProvenance& provenance);

}  // namespace rxtrain
