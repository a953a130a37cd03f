#include "rxtrain/chem/thermo.hpp"

#include <cmath>
#include <limits>
#include <stdexcept>
#include <type_traits>
#include <utility>

namespace rxtrain {
namespace {

template <class... Fs>
struct Overloaded : Fs... {
  using Fs::operator()...;
};
template <class... Fs>
Overloaded(Fs...) -> Overloaded<Fs...>;

// x2^n - x1^n written as dx * sum x2^k x1^(n-1-k), with dx = x2 - x1 passed
// in separately, so that short intervals keep their relative accuracy
// instead of cancelling two large powers.
double pow_diff(double x2, double x1, int n, double dx) {
  double sum = 0;
  double p2 = 1;  // x2^k
  for (int k = 0; k < n; ++k) {
    double term = p2;
    for (int j = 0; j < n - 1 - k; ++j) term *= x1;
    sum += term;
    p2 *= x2;
  }
  return dx * sum;
}

// ln(x2/x1) = ln(1 + dx/x1) through log1p for the same reason.
double log_ratio(double x1, double dx) { return std::log1p(dx / x1); }

void check_temperature(double T) {
  if (!std::isfinite(T) || T <= 0) {
    throw std::domain_error("thermo: temperature must be finite and positive (got " +
                            std::to_string(T) + " K)");
  }
}

bool all_finite(const auto& values) {
  for (double v : values) {
    if (!std::isfinite(v)) return false;
  }
  return true;
}

// ---- polynomial cp = a0 + a1 T + a2 T^2 + a3 T^3 ---------------------------

double poly_cp(const CpPolynomial& m, double T) {
  const auto& a = m.a;
  return a[0] + T * (a[1] + T * (a[2] + T * a[3]));
}

double poly_h(const CpPolynomial& m, double T1, double T2) {
  const auto& a = m.a;
  const double d = T2 - T1;
  return a[0] * d + a[1] / 2 * pow_diff(T2, T1, 2, d) + a[2] / 3 * pow_diff(T2, T1, 3, d) +
         a[3] / 4 * pow_diff(T2, T1, 4, d);
}

double poly_s(const CpPolynomial& m, double T1, double T2) {
  const auto& a = m.a;
  const double d = T2 - T1;
  return a[0] * log_ratio(T1, d) + a[1] * d + a[2] / 2 * pow_diff(T2, T1, 2, d) +
         a[3] / 3 * pow_diff(T2, T1, 3, d);
}

// ---- Shomate, t = T/1000 -----------------------------------------------------

double shomate_set_cp(const ShomateSet& s, double T) {
  const auto& c = s.c;
  const double t = T / 1000;
  return c[0] + t * (c[1] + t * (c[2] + t * c[3])) + c[4] / (t * t);
}

// integral_{T1}^{T2} cp dT = 1000 * [A t + B t^2/2 + C t^3/3 + D t^4/4 - E/t].
double shomate_set_h(const ShomateSet& s, double T1, double T2) {
  const auto& c = s.c;
  const double t1 = T1 / 1000;
  const double t2 = T2 / 1000;
  const double dt = (T2 - T1) / 1000;
  const double in_t = c[0] * dt + c[1] / 2 * pow_diff(t2, t1, 2, dt) +
                      c[2] / 3 * pow_diff(t2, t1, 3, dt) + c[3] / 4 * pow_diff(t2, t1, 4, dt) +
                      c[4] * dt / (t1 * t2);
  return 1000 * in_t;
}

// integral_{T1}^{T2} cp/T dT = [A ln t + B t + C t^2/2 + D t^3/3 - E/(2 t^2)].
double shomate_set_s(const ShomateSet& s, double T1, double T2) {
  const auto& c = s.c;
  const double t1 = T1 / 1000;
  const double t2 = T2 / 1000;
  const double dt = (T2 - T1) / 1000;
  return c[0] * log_ratio(t1, dt) + c[1] * dt + c[2] / 2 * pow_diff(t2, t1, 2, dt) +
         c[3] / 3 * pow_diff(t2, t1, 3, dt) +
         c[4] / 2 * pow_diff(t2, t1, 2, dt) / (t1 * t1 * t2 * t2);
}

// Where set i hands over to set i+1. Adjacent sets share an end point; across
// a gap each side is served by the nearer set, so the split is the midpoint.
double shomate_boundary(const CpShomate& m, std::size_t i) {
  const double hi = m.sets[i].T_high;
  const double lo = m.sets[i + 1].T_low;
  return hi == lo ? hi : 0.5 * (hi + lo);
}

// The set that governs T: below the first boundary the first set, above the
// last the last set (extrapolation); at a boundary the upper set.
const ShomateSet& shomate_set_at(const CpShomate& m, double T) {
  const std::size_t n = m.sets.size();
  for (std::size_t i = 0; i + 1 < n; ++i) {
    if (T < shomate_boundary(m, i)) return m.sets[i];
  }
  return m.sets[n - 1];
}

// Piecewise integral from T1 to T2, each set over its own share of the axis.
template <class SetIntegral>
double shomate_integral(const CpShomate& m, double T1, double T2, SetIntegral integral) {
  if (T2 < T1) return -shomate_integral(m, T2, T1, integral);
  const std::size_t n = m.sets.size();
  double total = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const double lo = i == 0 ? T1 : std::max(T1, shomate_boundary(m, i - 1));
    const double hi = i + 1 == n ? T2 : std::min(T2, shomate_boundary(m, i));
    if (hi > lo) total += integral(m.sets[i], lo, hi);
  }
  return total;
}

void validate(const CpShomate& m) {
  if (m.sets.empty()) throw std::invalid_argument("Shomate model has no coefficient sets");
  for (std::size_t i = 0; i < m.sets.size(); ++i) {
    const ShomateSet& s = m.sets[i];
    if (!all_finite(s.c)) throw std::invalid_argument("Shomate coefficients must be finite");
    if (!std::isfinite(s.T_low) || !std::isfinite(s.T_high) || s.T_low <= 0 ||
        s.T_low >= s.T_high) {
      throw std::invalid_argument("Shomate set needs 0 < T_low < T_high");
    }
    if (i > 0 && s.T_low < m.sets[i - 1].T_high) {
      throw std::invalid_argument(
          "Shomate sets must be sorted by temperature and must not overlap");
    }
  }
}

// ---- NASA-7 ------------------------------------------------------------------

const std::array<double, 7>& nasa_set_at(const Nasa7& m, double T) {
  return T < m.T_mid ? m.low : m.high;
}

double nasa_set_cp(const std::array<double, 7>& a, double T) {
  return kGasConstant * (a[0] + T * (a[1] + T * (a[2] + T * (a[3] + T * a[4]))));
}

// Absolute h from h/(R T) = a1 + a2 T/2 + a3 T^2/3 + a4 T^3/4 + a5 T^4/5 + a6/T.
double nasa_set_h_abs(const std::array<double, 7>& a, double T) {
  return kGasConstant *
         (T * (a[0] + T * (a[1] / 2 + T * (a[2] / 3 + T * (a[3] / 4 + T * a[4] / 5)))) + a[5]);
}

// Absolute s from s/R = a1 ln T + a2 T + a3 T^2/2 + a4 T^3/3 + a5 T^4/4 + a7.
double nasa_set_s_abs(const std::array<double, 7>& a, double T) {
  return kGasConstant *
         (a[0] * std::log(T) + T * (a[1] + T * (a[2] / 2 + T * (a[3] / 3 + T * a[4] / 4))) + a[6]);
}

// Same-set differences h(T2) - h(T1), s(T2) - s(T1) without cancelling a6/a7.
double nasa_set_dh(const std::array<double, 7>& a, double T1, double T2) {
  const double d = T2 - T1;
  return kGasConstant *
         (a[0] * d + a[1] / 2 * pow_diff(T2, T1, 2, d) + a[2] / 3 * pow_diff(T2, T1, 3, d) +
          a[3] / 4 * pow_diff(T2, T1, 4, d) + a[4] / 5 * pow_diff(T2, T1, 5, d));
}

double nasa_set_ds(const std::array<double, 7>& a, double T1, double T2) {
  const double d = T2 - T1;
  return kGasConstant * (a[0] * log_ratio(T1, d) + a[1] * d + a[2] / 2 * pow_diff(T2, T1, 2, d) +
                         a[3] / 3 * pow_diff(T2, T1, 3, d) + a[4] / 4 * pow_diff(T2, T1, 4, d));
}

// f(T2) - f(T1) for the piecewise NASA function f (h or s). When the two
// temperatures fall in different ranges the step between the polynomials at
// T_mid is part of the difference, as it is of the tabulated h and s.
template <class Diff, class Abs>
double nasa_difference(const Nasa7& m, double T1, double T2, Diff diff, Abs abs) {
  const auto& set1 = nasa_set_at(m, T1);
  const auto& set2 = nasa_set_at(m, T2);
  if (&set1 == &set2) return diff(set1, T1, T2);
  const double Tm = m.T_mid;
  return diff(set1, T1, Tm) + (abs(set2, Tm) - abs(set1, Tm)) + diff(set2, Tm, T2);
}

void validate(const Nasa7& m) {
  if (!all_finite(m.low) || !all_finite(m.high)) {
    throw std::invalid_argument("NASA-7 coefficients must be finite");
  }
  if (!std::isfinite(m.T_mid) || m.T_mid <= 0) {
    throw std::invalid_argument("NASA-7 T_mid must be finite and positive");
  }
  if (!std::isfinite(m.T_low) || m.T_low < 0 || (m.T_low > 0 && m.T_low >= m.T_mid)) {
    throw std::invalid_argument("NASA-7 needs T_low < T_mid (or T_low = 0, not given)");
  }
  if (!std::isfinite(m.T_high) || m.T_high < 0 || (m.T_high > 0 && m.T_high <= m.T_mid)) {
    throw std::invalid_argument("NASA-7 needs T_high > T_mid (or T_high = 0, not given)");
  }
}

void validate(const CpPolynomial& m) {
  if (!all_finite(m.a)) throw std::invalid_argument("cp polynomial coefficients must be finite");
  if (m.T_range) {
    const auto [lo, hi] = *m.T_range;
    if (!std::isfinite(lo) || !std::isfinite(hi) || lo <= 0 || lo >= hi) {
      throw std::invalid_argument("cp polynomial range needs 0 < T_low < T_high");
    }
  }
}

void validate(const CpConstant& m) {
  if (!std::isfinite(m.cp)) throw std::invalid_argument("constant cp must be finite");
}

}  // namespace

ThermoModel::ThermoModel(CpModel cp, std::optional<double> h_f, std::optional<double> s_298)
    : cp_(std::move(cp)), h_f_(h_f), s_298_(s_298) {
  std::visit([](const auto& m) { validate(m); }, cp_);
  if (const auto* nasa = std::get_if<Nasa7>(&cp_)) {
    // The polynomials carry their own reference values (a6, a7).
    h_f_ = nasa_set_h_abs(nasa_set_at(*nasa, kReferenceT), kReferenceT);
    s_298_ = nasa_set_s_abs(nasa_set_at(*nasa, kReferenceT), kReferenceT);
  } else {
    if (h_f_ && !std::isfinite(*h_f_)) throw std::invalid_argument("h_f must be finite");
    if (s_298_ && !std::isfinite(*s_298_)) throw std::invalid_argument("s_298 must be finite");
  }
}

double ThermoModel::cp(double T) const {
  check_temperature(T);
  return std::visit(Overloaded{
                        [](const CpConstant& m) { return m.cp; },
                        [T](const CpPolynomial& m) { return poly_cp(m, T); },
                        [T](const CpShomate& m) { return shomate_set_cp(shomate_set_at(m, T), T); },
                        [T](const Nasa7& m) { return nasa_set_cp(nasa_set_at(m, T), T); },
                    },
                    cp_);
}

double ThermoModel::h_sensible(double T) const {
  check_temperature(T);
  constexpr double Tr = kReferenceT;
  return std::visit(
      Overloaded{
          [T](const CpConstant& m) { return m.cp * (T - Tr); },
          [T](const CpPolynomial& m) { return poly_h(m, Tr, T); },
          [T](const CpShomate& m) { return shomate_integral(m, Tr, T, shomate_set_h); },
          [T](const Nasa7& m) { return nasa_difference(m, Tr, T, nasa_set_dh, nasa_set_h_abs); },
      },
      cp_);
}

double ThermoModel::s_sensible(double T) const {
  check_temperature(T);
  constexpr double Tr = kReferenceT;
  return std::visit(
      Overloaded{
          [T](const CpConstant& m) { return m.cp * log_ratio(Tr, T - Tr); },
          [T](const CpPolynomial& m) { return poly_s(m, Tr, T); },
          [T](const CpShomate& m) { return shomate_integral(m, Tr, T, shomate_set_s); },
          [T](const Nasa7& m) { return nasa_difference(m, Tr, T, nasa_set_ds, nasa_set_s_abs); },
      },
      cp_);
}

double ThermoModel::h(double T) const {
  if (!h_f_) throw std::logic_error("thermo: h requested but no enthalpy of formation is set");
  return *h_f_ + h_sensible(T);
}

double ThermoModel::s(double T) const {
  if (!s_298_) throw std::logic_error("thermo: s requested but no standard entropy is set");
  return *s_298_ + s_sensible(T);
}

bool ThermoModel::has_h_f() const { return h_f_.has_value(); }
bool ThermoModel::has_s() const { return s_298_.has_value(); }
std::optional<double> ThermoModel::h_f() const { return h_f_; }
std::optional<double> ThermoModel::s_298() const { return s_298_; }

bool ThermoModel::in_range(double T) const {
  return std::visit(Overloaded{
                        [](const CpConstant&) { return true; },
                        [T](const CpPolynomial& m) {
                          return !m.T_range || (T >= (*m.T_range)[0] && T <= (*m.T_range)[1]);
                        },
                        [T](const CpShomate& m) {
                          for (const ShomateSet& s : m.sets) {
                            if (T >= s.T_low && T <= s.T_high) return true;
                          }
                          return false;
                        },
                        [T](const Nasa7& m) {
                          return (m.T_low == 0 || T >= m.T_low) && (m.T_high == 0 || T <= m.T_high);
                        },
                    },
                    cp_);
}

std::vector<CpPiece> ThermoModel::pieces() const {
  constexpr double kInf = std::numeric_limits<double>::infinity();
  return std::visit(
      Overloaded{
          [&](const CpConstant& m) {
            return std::vector<CpPiece>{{0, kInf, {m.cp, 0, 0, 0, 0, 0}}};
          },
          [&](const CpPolynomial& m) {
            return std::vector<CpPiece>{{0, kInf, {m.a[0], m.a[1], m.a[2], m.a[3], 0, 0}}};
          },
          [&](const CpShomate& m) {
            // t = T/1000: B t = (B/1e3) T, ..., E/t^2 = (E 1e6)/T^2.
            std::vector<CpPiece> out;
            for (std::size_t i = 0; i < m.sets.size(); ++i) {
              const auto& c = m.sets[i].c;
              out.push_back({i == 0 ? 0.0 : shomate_boundary(m, i - 1),
                             i + 1 == m.sets.size() ? kInf : shomate_boundary(m, i),
                             {c[0], c[1] / 1e3, c[2] / 1e6, c[3] / 1e9, 0, c[4] * 1e6}});
            }
            return out;
          },
          [&](const Nasa7& m) {
            auto piece = [](double lo, double hi, const std::array<double, 7>& a) {
              const double R = kGasConstant;
              return CpPiece{lo, hi, {R * a[0], R * a[1], R * a[2], R * a[3], R * a[4], 0}};
            };
            return std::vector<CpPiece>{piece(0, m.T_mid, m.low), piece(m.T_mid, kInf, m.high)};
          },
      },
      cp_);
}

std::optional<std::array<double, 2>> ThermoModel::declared_range() const {
  using Range = std::optional<std::array<double, 2>>;
  return std::visit(Overloaded{
                        [](const CpConstant&) -> Range { return std::nullopt; },
                        [](const CpPolynomial& m) -> Range { return m.T_range; },
                        [](const CpShomate& m) -> Range {
                          return std::array<double, 2>{m.sets.front().T_low, m.sets.back().T_high};
                        },
                        [](const Nasa7& m) -> Range {
                          if (m.T_low == 0 && m.T_high == 0) return std::nullopt;
                          // An end that was not given is open: 0 below, infinity above.
                          return std::array<double, 2>{
                              m.T_low,
                              m.T_high == 0 ? std::numeric_limits<double>::infinity() : m.T_high};
                        },
                    },
                    cp_);
}

}  // namespace rxtrain
