// The figures of a run's report, assembled from the result (plotting lives
// in svg.hpp; this file decides what is plotted). Temperatures in °C.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/report/svg.hpp"
#include "rxtrain/stages/levenspiel.hpp"

namespace rxtrain {

struct Figure {
  std::string name;     // file stem of its standalone SVG, e.g. "tx-diagram"
  std::string caption;  // one sentence under the figure
  svg::Chart chart;
};

// The colour of a reactor stage in every figure of a report: by its place
// among the train's reactors (exchangers do not count), from a palette
// without yellow, black or the T_max line's vermillion. Exchangers share one
// neutral grey.
inline constexpr const char* kExchangerColour = "#555555";
std::string stage_colour(std::size_t reactor_index);
std::string stage_colour(const TrainResult& r, const std::string& stage_id);

// Temperature-conversion diagram: equilibrium curve X_eq(T), maximum-rate
// locus, every stage's path (exchangers as constant-conversion steps) and
// T_max when the case gives one.
Figure tx_diagram(const Case& c, const TrainResult& r,
                  const std::string& title = "Temperature–conversion diagram");
// The diagram, and a second one zoomed on the reactors after the first when
// they crowd a corner of it (each side of their box under 35 % of the
// whole), as later beds of an exothermic train do near equilibrium.
std::vector<Figure> tx_figures(const Case& c, const TrainResult& r,
                               const std::string& title = "Temperature–conversion diagram");
// Temperature and conversion against cumulative position (catalyst mass
// when every reactor has one, else volume) with stage boundaries.
std::vector<Figure> profile_figures(const TrainResult& r);
// F/(-r) against X with each stage's area shaded.
Figure levenspiel_figure(const std::vector<LevenspielCurve>& curves, const std::string& key);

// Every figure of a run report, in order.
std::vector<Figure> run_figures(const Case& c, const TrainResult& r,
                                const std::vector<LevenspielCurve>& curves);

}  // namespace rxtrain
