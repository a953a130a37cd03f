#include "rxtrain/kinetics/mechanism.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <stdexcept>
#include <string>

namespace rxtrain {

namespace {

// Liquid activities are C / (1 mol/L) = C / 1000 mol/m3.
constexpr double kLiquidStandardConcentration = 1000.0;

// d^e with the limits a rate law needs at d = 0.
double safe_pow(double d, double e) {
  if (e == 0) return 1.0;
  if (e == 1) return d;
  if (e == 2) return d * d;
  if (e == 0.5) return std::sqrt(d);  // common half orders: sqrt is far cheaper than pow
  return std::pow(d, e);
}

// Derivative of d^e. At d = 0 with 0 < e < 1 the slope is infinite; a floor
// keeps the Jacobian finite (the rate itself stays exact).
double safe_pow_derivative(double d, double e) {
  if (e == 0) return 0.0;
  if (e == 1) return 1.0;
  if (e == 2) return 2.0 * d;
  constexpr double kFloor = 1e-30;
  return e * std::pow(std::max(d, kFloor), e - 1.0);
}

}  // namespace

Mechanism::Mechanism(Phase phase, std::vector<Species> species, std::vector<Reaction> reactions)
    : phase_(phase), species_(std::move(species)), reactions_(std::move(reactions)) {
  const int n = n_species();
  cp_start_.push_back(0);
  for (const auto& sp : species_) {
    for (const CpPiece& p : sp.thermo.pieces()) cp_pieces_.push_back(p);
    cp_start_.push_back(static_cast<int>(cp_pieces_.size()));
  }
  for (const auto& rx : reactions_) {
    if (static_cast<int>(rx.nu.size()) != n || static_cast<int>(rx.rate.orders.size()) != n)
      throw std::invalid_argument("reaction " + rx.id + ": vectors not sized to species");
    Compiled c;
    const auto& ads = rx.rate.adsorption;
    auto adsorbs = [&](int i) {
      if (!ads) return false;
      return std::any_of(ads->terms.begin(), ads->terms.end(),
                         [i](const AdsorptionTerm& t) { return t.powers[i] != 0; });
    };
    if (ads)
      for (const auto& t : ads->terms)
        if (static_cast<int>(t.powers.size()) != n)
          throw std::invalid_argument("reaction " + rx.id +
                                      ": adsorption term not sized to species");
    if (ads && ads->terms.size() > Adsorption::kMaxTerms)
      throw std::invalid_argument("reaction " + rx.id + ": too many adsorption terms");
    for (int i = 0; i < n; ++i) {
      const double o = rx.rate.orders[i];
      const double nu = rx.nu[i];
      const bool a = adsorbs(i);
      if (o != 0 || nu != 0 || a) {
        const bool read = o != 0 || (rx.reversible && o + nu != 0) || a;
        c.parts.push_back({i, o, o + nu, read});
        c.species.push_back(i);
      }
      c.dnu += nu;
    }
    if (ads) {
      c.ads_exp = ads->exponent;
      for (const auto& t : ads->terms) {
        CompiledTerm ct;
        ct.K = t.K;
        ct.dH = t.dH;
        ct.inv_T_ref = t.T_ref ? 1.0 / *t.T_ref : 0.0;
        for (int i = 0; i < n; ++i)
          if (t.powers[i] != 0) ct.factors.emplace_back(i, t.powers[i]);
        c.ads.push_back(std::move(ct));
      }
    }
    c.offset = n_direct_;
    n_direct_ += static_cast<int>(c.parts.size());
    c.thermo = ReactionThermo(species_, rx.nu, rx.dH_298);
    // Activity a = s d: liquid C / (1 mol/L), gas by pressure p / 1 bar.
    c.ln_s = phase_ == Phase::Liquid ? -std::log(kLiquidStandardConcentration)
                                     : -std::log(kStandardPressure);
    compiled_.push_back(std::move(c));
  }
  if (phase_ == Phase::Liquid)
    for (const auto& sp : species_) liquid_v_.push_back(sp.liquid_molar_volume().value());
}

double Mechanism::liquid_volume_flow(const double* F) const {
  double v = 0;
  for (int i = 0; i < n_species(); ++i) v += F[i] * liquid_v_[i];
  return v;
}

int Mechanism::index_of(const std::string& id) const {
  for (int i = 0; i < n_species(); ++i)
    if (species_[i].id == id) return i;
  return -1;
}

double Mechanism::volumetric_flow(double T, double P, const double* F) const {
  double v = 0;
  if (phase_ == Phase::Gas) {
    double Ft = 0;
    for (int i = 0; i < n_species(); ++i) Ft += F[i];
    v = Ft * kGasConstant * T / P;
  } else {
    v = liquid_volume_flow(F);
  }
  return v;
}

namespace {

void check_temperature(double T) {
  if (!(T > 0) || !std::isfinite(T))
    throw std::domain_error("thermo: temperature must be finite and positive (got " +
                            std::to_string(T) + " K)");
}

// cp at T (T2 = T * T) from one species' pieces p .. last (last included).
double cp_of_pieces(const CpPiece* p, const CpPiece* last, double T, double T2) {
  while (p != last && !(T < p->T_to)) ++p;
  const auto& c = p->c;
  return c[0] + T * (c[1] + T * (c[2] + T * (c[3] + T * c[4]))) + c[5] / T2;
}

}  // namespace

double Mechanism::cp(int i, double T) const {
  check_temperature(T);
  return cp_of_pieces(&cp_pieces_[cp_start_[i]], &cp_pieces_[cp_start_[i + 1] - 1], T, T * T);
}

double Mechanism::heat_capacity_flow(double T, const double* F) const {
  // The right-hand side calls this once per evaluation: T is checked and
  // squared once for every species.
  check_temperature(T);
  const double T2 = T * T;
  double c = 0;
  for (int i = 0; i < n_species(); ++i)
    c += F[i] * cp_of_pieces(&cp_pieces_[cp_start_[i]], &cp_pieces_[cp_start_[i + 1] - 1], T, T2);
  return c;
}

double Mechanism::sensible_enthalpy_flow(double T, const double* F) const {
  double h = 0;
  for (int i = 0; i < n_species(); ++i) h += F[i] * species_[i].thermo.h_sensible(T);
  return h;
}

double Mechanism::mass_flow(const double* F) const {
  double m = 0;
  for (int i = 0; i < n_species(); ++i) m += F[i] * species_[i].mw.value();
  return m;
}

double Mechanism::dH(int j, double T) const { return compiled_[j].thermo.dH(T); }

double Mechanism::dCp(int j, double T) const { return compiled_[j].thermo.dCp(T); }

double Mechanism::ln_K(int j, double T) const {
  const auto& rx = reactions_[j];
  const auto& eq = rx.equilibrium;
  switch (eq.kind) {
    case EquilibriumSource::Kind::VantHoff:
      return std::log(eq.K_ref) - eq.dH / kGasConstant * (1.0 / T - 1.0 / eq.T_ref);
    case EquilibriumSource::Kind::Thermo:
      return compiled_[j].thermo.ln_K(T);
    case EquilibriumSource::Kind::None:
      break;
  }
  throw std::logic_error("reaction " + rx.id + " has no equilibrium source");
}

double Mechanism::dln_K_dT(int j, double T) const {
  const auto& rx = reactions_[j];
  const auto& eq = rx.equilibrium;
  if (eq.kind == EquilibriumSource::Kind::VantHoff) return eq.dH / (kGasConstant * T * T);
  // van 't Hoff equation, exact for thermo built from the same h(T), s(T).
  return compiled_[j].thermo.dln_K_dT(T);
}

double Mechanism::rate_constant(int j, double T) const {
  const auto& law = reactions_[j].rate;
  if (law.T_ref) return law.A * std::exp(-law.Ea / kGasConstant * (1.0 / T - 1.0 / *law.T_ref));
  return law.A * std::exp(-law.Ea / (kGasConstant * T));
}

Mechanism::Scale Mechanism::driving_scale(Driving driving, double T, double P,
                                          const double* F) const {
  Scale s;
  if (phase_ == Phase::Gas) {
    double Ft = 0;
    for (int i = 0; i < n_species(); ++i) Ft += std::max(F[i], 0.0);
    if (driving == Driving::Pressure) {
      s.phi = P / Ft;
      s.dphi_dT = 0;
    } else {
      s.phi = P / (Ft * kGasConstant * T);
      s.dphi_dT = -s.phi / T;
    }
    s.dphi_dFt = -s.phi / Ft;
  } else {
    // The rate laws count flows below zero (round-off) as zero.
    double v = 0;
    for (int i = 0; i < n_species(); ++i) v += std::max(F[i], 0.0) * liquid_v_[i];
    s.phi = 1.0 / v;
    s.dphi_dv = -s.phi * s.phi;
  }
  return s;
}

void Mechanism::activity_scale(int j, double T, double& ln_s, double& dln_s_dT) const {
  dln_s_dT = 0;
  if (phase_ == Phase::Gas && reactions_[j].rate.driving == Driving::Concentration) {
    // a = C R T / p0
    ln_s = std::log(kGasConstant * T / kStandardPressure);
    dln_s_dT = 1.0 / T;
  } else {
    ln_s = compiled_[j].ln_s;  // constant: computed once in the constructor
  }
}

Mechanism::RateLawValue Mechanism::evaluate(int j, double T, const double* d, double* g) const {
  return evaluate(j, T, d, g, true);
}

Mechanism::RateLawValue Mechanism::evaluate(int j, double T, const double* d, double* g,
                                            bool with_dT) const {
  const auto& rx = reactions_[j];
  const auto& parts = compiled_[j].parts;
  RateLawValue v;
  v.k = rate_constant(j, T);
  if (with_dT) v.dk_dT = v.k * rx.rate.Ea / (kGasConstant * T * T);  // both Arrhenius forms
  double fwd = 1, rev = 1;
  for (const auto& p : parts) {
    fwd *= safe_pow(d[p.i], p.forward_exp);
    if (rx.reversible) rev *= safe_pow(d[p.i], p.reverse_exp);
  }
  if (rx.reversible) {
    double ln_s, dln_s;
    activity_scale(j, T, ln_s, dln_s);
    v.c_rev = std::exp(compiled_[j].dnu * ln_s - ln_K(j, T));
    if (with_dT) v.dc_rev_dT = v.c_rev * (compiled_[j].dnu * dln_s - dln_K_dT(j, T));
    v.rev = rev;
  }
  v.value = fwd - v.c_rev * v.rev;
  v.dvalue_dT = -(v.dc_rev_dT * v.rev);
  if (g) {
    // g_i = d(value)/d(d_i): products over the other participants.
    for (const auto& p : parts) {
      double gf = safe_pow_derivative(d[p.i], p.forward_exp);
      double gr = rx.reversible ? safe_pow_derivative(d[p.i], p.reverse_exp) : 0.0;
      for (const auto& q : parts) {
        if (q.i == p.i) continue;
        gf *= safe_pow(d[q.i], q.forward_exp);
        if (rx.reversible) gr *= safe_pow(d[q.i], q.reverse_exp);
      }
      g[p.i] = gf - v.c_rev * gr;
    }
  }
  if (!compiled_[j].ads.empty()) apply_adsorption(j, T, d, g, v);
  return v;
}

void Mechanism::apply_adsorption(int j, double T, const double* d, double* g,
                                 RateLawValue& v) const {
  const Compiled& c = compiled_[j];
  // DEN = 1 + sum_t K_t(T) P_t, P_t = prod d_i^m_i; dK_t/dT = K_t dH_t/(R T^2).
  double den = 1, dden_dT = 0;
  std::array<double, Adsorption::kMaxTerms> Ks;
  for (std::size_t k = 0; k < c.ads.size(); ++k) {
    const CompiledTerm& t = c.ads[k];
    const double K = t.K * std::exp(-t.dH / kGasConstant * (1.0 / T - t.inv_T_ref));
    Ks[k] = K;
    double prod = 1;
    for (const auto& [i, m] : t.factors) prod *= safe_pow(d[i], m);
    den += K * prod;
    dden_dT += K * prod * t.dH / (kGasConstant * T * T);
  }
  const double n = c.ads_exp;
  const double w = 1.0 / safe_pow(den, n);  // DEN^-n
  const double num = v.value;
  v.den = den;
  v.value = num * w;
  // d(num DEN^-n) = DEN^-n d num - n num DEN^-(n+1) dDEN.
  const double c_den = n * v.value / den;
  v.dvalue_dT = v.dvalue_dT * w - c_den * dden_dT;
  if (!g) return;
  for (const auto& p : c.parts) g[p.i] *= w;
  for (std::size_t k = 0; k < c.ads.size(); ++k) {
    const CompiledTerm& t = c.ads[k];
    const double K = Ks[k];
    for (const auto& [i, m] : t.factors) {
      double dprod = safe_pow_derivative(d[i], m);
      for (const auto& [q, mq] : t.factors)
        if (q != i) dprod *= safe_pow(d[q], mq);
      g[i] -= c_den * K * dprod;
    }
  }
}

void Mechanism::rates(double T, double P, const double* F, double* r) const {
  const int nr = n_reactions();
  Scales scales;
  // Driving quantities (participants only) on the stack for mechanisms of
  // up to 64 species, so that the right-hand side never allocates there.
  constexpr int kStack = 64;
  double stack[kStack];
  std::vector<double> heap;
  if (n_species() > kStack) heap.resize(static_cast<std::size_t>(n_species()));
  double* d = n_species() > kStack ? heap.data() : stack;
  for (int j = 0; j < nr; ++j) {
    const Scale& sc = scale_for(reactions_[j].rate.driving, T, P, F, scales);
    for (const auto& p : compiled_[j].parts) d[p.i] = std::max(F[p.i], 0.0) * sc.phi;
    // The rates alone: the T derivatives (a second thermo evaluation
    // for K(T)) are left out, the value is the same arithmetic.
    r[j] = evaluate(j, T, d, nullptr, false).rate();
  }
}

const Mechanism::Scale& Mechanism::scale_for(Driving driving, double T, double P, const double* F,
                                             Scales& s) const {
  if (driving == Driving::Pressure) {
    if (!s.have_press) s.press = driving_scale(Driving::Pressure, T, P, F), s.have_press = true;
    return s.press;
  }
  if (!s.have_conc) s.conc = driving_scale(Driving::Concentration, T, P, F), s.have_conc = true;
  return s.conc;
}

double Mechanism::reaction_derivatives(int j, double T, const Scale& sc, const double* F, double* d,
                                       double* g, double* direct, double& dilution,
                                       double& dr_dT) const {
  const auto& parts = compiled_[j].parts;
  for (const auto& p : parts) d[p.i] = std::max(F[p.i], 0.0) * sc.phi;
  const RateLawValue v = evaluate(j, T, d, g);
  const double k = v.k;

  // Chain rule through d_i = max(F_i,0) * phi(F, T).
  double sum_gF = 0;  // sum_i g_i * F_i+ (only participants have g != 0)
  for (const auto& p : parts) sum_gF += g[p.i] * std::max(F[p.i], 0.0);
  for (std::size_t q = 0; q < parts.size(); ++q)
    direct[q] = F[parts[q].i] > 0 ? k * g[parts[q].i] * sc.phi : 0.0;
  dilution = k * sum_gF * (phase_ == Phase::Gas ? sc.dphi_dFt : sc.dphi_dv);
  dr_dT = v.dk_dT * v.value + k * (sum_gF * sc.dphi_dT + v.dvalue_dT);
  return v.rate();
}

double Mechanism::dilution_weight(int k, const double* F) const {
  if (!(F[k] > 0)) return 0.0;
  return phase_ == Phase::Gas ? 1.0 : liquid_v_[k];
}

void Mechanism::rates_and_jacobian(double T, double P, const double* F, double* r,
                                   Eigen::Ref<Eigen::MatrixXd> dr_dF,
                                   Eigen::Ref<Eigen::VectorXd> dr_dT) const {
  Scratch scratch;
  rates_and_jacobian(T, P, F, r, dr_dF, dr_dT, scratch);
}

void Mechanism::rates_and_jacobian(double T, double P, const double* F, double* r,
                                   Eigen::Ref<Eigen::MatrixXd> dr_dF,
                                   Eigen::Ref<Eigen::VectorXd> dr_dT, Scratch& scratch) const {
  const int n = n_species();
  const int nr = n_reactions();
  dr_dF.setZero();
  scratch.d.resize(n);
  scratch.g.resize(n);
  scratch.direct.resize(n);
  Scales scales;
  for (int j = 0; j < nr; ++j) {
    const Scale& sc = scale_for(reactions_[j].rate.driving, T, P, F, scales);
    double dilution = 0, dT = 0;
    r[j] = reaction_derivatives(j, T, sc, F, scratch.d.data(), scratch.g.data(),
                                scratch.direct.data(), dilution, dT);
    const auto& parts = compiled_[j].parts;
    for (std::size_t q = 0; q < parts.size(); ++q)
      if (F[parts[q].i] > 0) dr_dF(j, parts[q].i) += scratch.direct[q];
    if (phase_ == Phase::Gas) {
      for (int i = 0; i < n; ++i)
        if (F[i] > 0) dr_dF(j, i) += dilution;
    } else {
      for (int i = 0; i < n; ++i)
        if (F[i] > 0) dr_dF(j, i) += dilution * liquid_v_[i];
    }
    dr_dT(j) = dT;
  }
}

void Mechanism::rates_and_sparse_jacobian(double T, double P, const double* F, double* r,
                                          double* direct, double* dilution, double* dr_dT,
                                          Scratch& scratch) const {
  const int n = n_species();
  const int nr = n_reactions();
  scratch.d.resize(n);
  scratch.g.resize(n);
  Scales scales;
  for (int j = 0; j < nr; ++j) {
    const Scale& sc = scale_for(reactions_[j].rate.driving, T, P, F, scales);
    r[j] = reaction_derivatives(j, T, sc, F, scratch.d.data(), scratch.g.data(),
                                direct + compiled_[j].offset, dilution[j], dr_dT[j]);
  }
}

void Mechanism::rates_pressure_derivative(double T, double P, const double* F, double* dr_dP,
                                          Scratch& scratch) const {
  const int nr = n_reactions();
  if (phase_ != Phase::Gas) {
    std::fill(dr_dP, dr_dP + nr, 0.0);
    return;
  }
  scratch.d.resize(n_species());
  scratch.g.resize(n_species());
  Scales scales;
  for (int j = 0; j < nr; ++j) {
    const Scale& sc = scale_for(reactions_[j].rate.driving, T, P, F, scales);
    const auto& parts = compiled_[j].parts;
    for (const auto& p : parts) {
      scratch.d[p.i] = std::max(F[p.i], 0.0) * sc.phi;
      scratch.g[p.i] = 0;
    }
    const RateLawValue v = evaluate(j, T, scratch.d.data(), scratch.g.data());
    double sum = 0;
    for (const auto& p : parts) sum += scratch.g[p.i] * scratch.d[p.i];
    dr_dP[j] = v.k * sum / P;
  }
}

}  // namespace rxtrain
