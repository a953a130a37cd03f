// Levenspiel data of a train: F_key,feed / (-r_key) against the key's
// overall conversion along each reactor stage's actual (non-isothermal)
// path. The area under a tubular stage's curve is its volume; a stirred
// tank stands for the rectangle of its outlet value times its conversion
// step. Stages whose rates all count per kg of catalyst (and that have a
// bulk density) use F / (-r') and catalyst mass instead.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/kinetics/mechanism.hpp"
#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

struct LevenspielPoint {
  double X = 0;
  // F_key,feed / (-r_key): m3 on a volume basis, kg on a catalyst basis.
  // Points where the key is not consumed (at or past equilibrium) are
  // left out: the inverse rate is unbounded there.
  double inverse_rate = 0;
};

struct LevenspielCurve {
  std::string stage;
  bool catalyst_basis = false;  // F/(-r') in kg, area = catalyst mass
  bool rectangle = false;       // stirred tank: one point at its outlet
  double X_in = 0;              // the stage's conversion step
  double X_out = 0;
  std::vector<LevenspielPoint> points;
  // Volume (or catalyst mass) the curve stands for: the rectangle for a
  // stirred tank; for a tubular stage the area under the curve, with the
  // state between profile points a cubic Hermite interpolant in X (slopes
  // from the stage's balances) and 1/r integrated by a 7-point Kronrod rule
  // where it meets 1e-10 relative by its own estimate, else by adaptive
  // Gauss-Legendre, so it matches the stage's volume to ~1e-7 or better.
  // A bed that runs onto equilibrium (or complete conversion) is the
  // exception: its inverse rate grows without bound and the length that
  // sits at equilibrium adds nothing, so the area falls short of its size.
  double area = 0;
};

// One curve per reactor stage of `stages` (exchangers are skipped).
std::vector<LevenspielCurve> levenspiel_curves(const Mechanism& mech, int key, double F_key_feed,
                                               const std::vector<StageResult>& stages);

}  // namespace rxtrain
