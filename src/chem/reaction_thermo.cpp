#include "rxtrain/chem/reaction_thermo.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

namespace rxtrain {

namespace {

// A point inside [lo, hi) at which the constants of a piece are read off
// the species' own functions: the reference temperature where it lies
// inside, else a point well inside the stretch.
double inner_point(double lo, double hi) {
  if (lo <= kReferenceT && kReferenceT < hi) return kReferenceT;
  if (!std::isfinite(hi)) return lo + 100.0;
  if (lo <= 0) return 0.5 * hi;
  return 0.5 * (lo + hi);
}

}  // namespace

ReactionThermo::ReactionThermo(const std::vector<Species>& species, const std::vector<double>& nu,
                               double dH_298)
    : dH_298_(dH_298) {
  if (nu.size() != species.size())
    throw std::invalid_argument("ReactionThermo: nu not sized to the species");
  // Every temperature at which some participant changes coefficient set.
  std::vector<double> cuts;
  has_gibbs_ = true;
  for (std::size_t i = 0; i < species.size(); ++i) {
    if (nu[i] == 0) continue;
    const ThermoModel& th = species[i].thermo;
    has_gibbs_ = has_gibbs_ && th.has_h_f() && th.has_s();
    for (const CpPiece& p : th.pieces())
      if (p.T_from > 0) cuts.push_back(p.T_from);
  }
  std::sort(cuts.begin(), cuts.end());
  cuts.erase(std::unique(cuts.begin(), cuts.end()), cuts.end());
  cuts.push_back(std::numeric_limits<double>::infinity());

  double lo = 0;
  for (const double hi : cuts) {
    Piece piece;
    piece.T_to = hi;
    const double Tm = inner_point(lo, hi);
    double h_sens = 0, h_abs = 0, s_abs = 0;
    for (std::size_t i = 0; i < species.size(); ++i) {
      if (nu[i] == 0) continue;
      const ThermoModel& th = species[i].thermo;
      for (const CpPiece& p : th.pieces()) {
        if (!(p.T_from <= Tm && Tm < p.T_to)) continue;
        for (int k = 0; k < 6; ++k) piece.c[k] += nu[i] * p.c[k];
      }
      h_sens += nu[i] * th.h_sensible(Tm);
      if (has_gibbs_) {
        h_abs += nu[i] * th.h(Tm);
        s_abs += nu[i] * th.s(Tm);
      }
    }
    piece.h_sensible = h_sens - H(piece, Tm);
    piece.h_abs = h_abs - H(piece, Tm);
    piece.s_abs = s_abs - S(piece, Tm);
    pieces_.push_back(piece);
    lo = hi;
  }
}

const ReactionThermo::Piece& ReactionThermo::piece_at(double T) const {
  if (!(T > 0) || !std::isfinite(T))
    throw std::domain_error("thermo: temperature must be finite and positive (got " +
                            std::to_string(T) + " K)");
  for (const Piece& p : pieces_)
    if (T < p.T_to) return p;
  return pieces_.back();
}

double ReactionThermo::H(const Piece& p, double T) {
  const auto& c = p.c;
  return T * (c[0] + T * (c[1] / 2 + T * (c[2] / 3 + T * (c[3] / 4 + T * c[4] / 5)))) - c[5] / T;
}

double ReactionThermo::S(const Piece& p, double T) {
  const auto& c = p.c;
  return c[0] * std::log(T) + T * (c[1] + T * (c[2] / 2 + T * (c[3] / 3 + T * c[4] / 4))) -
         c[5] / (2 * T * T);
}

double ReactionThermo::dH(double T) const {
  const Piece& p = piece_at(T);
  return dH_298_ + p.h_sensible + H(p, T);
}

double ReactionThermo::dCp(double T) const {
  const Piece& p = piece_at(T);
  const auto& c = p.c;
  return c[0] + T * (c[1] + T * (c[2] + T * (c[3] + T * c[4]))) + c[5] / (T * T);
}

double ReactionThermo::ln_K(double T) const {
  if (!has_gibbs_)
    throw std::logic_error("thermo: ln K requested without h_f and s of every species");
  const Piece& p = piece_at(T);
  const double h = p.h_abs + H(p, T);
  const double s = p.s_abs + S(p, T);
  return -(h - T * s) / (kGasConstant * T);
}

double ReactionThermo::dln_K_dT(double T) const {
  if (!has_gibbs_)
    throw std::logic_error("thermo: ln K requested without h_f and s of every species");
  const Piece& p = piece_at(T);
  return (p.h_abs + H(p, T)) / (kGasConstant * T * T);
}

}  // namespace rxtrain
