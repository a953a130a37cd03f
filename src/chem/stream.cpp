#include "rxtrain/chem/stream.hpp"

#include <algorithm>
#include <numeric>

namespace rxtrain {

double Stream::total_flow() const { return std::accumulate(F.begin(), F.end(), 0.0); }

std::vector<double> mole_fractions(const Stream& s) {
  std::vector<double> y(s.F.size(), 0.0);
  double total = 0;
  for (double f : s.F) total += std::max(0.0, f);
  if (total <= 0) return y;
  for (std::size_t i = 0; i < y.size(); ++i) y[i] = std::max(0.0, s.F[i]) / total;
  return y;
}

std::optional<std::vector<double>> species_mass_flows(const Stream& s,
                                                      const std::vector<double>& molar_mass) {
  if (molar_mass.empty() || molar_mass.size() != s.F.size()) return std::nullopt;
  std::vector<double> m(s.F.size());
  for (std::size_t i = 0; i < m.size(); ++i) m[i] = std::max(0.0, s.F[i]) * molar_mass[i];
  return m;
}

std::optional<double> mass_flow(const Stream& s, const std::vector<double>& molar_mass) {
  const auto m = species_mass_flows(s, molar_mass);
  if (!m) return std::nullopt;
  return std::accumulate(m->begin(), m->end(), 0.0);
}

std::optional<double> mass_balance_closure(const Stream& in, const Stream& out,
                                           const std::vector<double>& molar_mass) {
  const auto m_in = mass_flow(in, molar_mass), m_out = mass_flow(out, molar_mass);
  if (!m_in || !m_out || *m_in <= 0) return std::nullopt;
  return (*m_in - *m_out) / *m_in;
}

}  // namespace rxtrain
