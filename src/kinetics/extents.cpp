#include "rxtrain/kinetics/extents.hpp"

#include <Eigen/Core>
#include <Eigen/QR>

namespace rxtrain {

namespace {

// Species × reactions: the columns are the reactions' coefficient vectors.
Eigen::MatrixXd columns(const Stoichiometry& s) {
  Eigen::MatrixXd m(s.n_species, s.n_reactions);
  for (int j = 0; j < s.n_reactions; ++j)
    for (int i = 0; i < s.n_species; ++i)
      m(i, j) = s.nu[static_cast<std::size_t>(j * s.n_species + i)];
  return m;
}

}  // namespace

Stoichiometry Stoichiometry::of(std::span<const Reaction> reactions) {
  Stoichiometry s;
  s.n_reactions = static_cast<int>(reactions.size());
  s.n_species = reactions.empty() ? 0 : static_cast<int>(reactions.front().nu.size());
  s.nu.reserve(static_cast<std::size_t>(s.n_reactions * s.n_species));
  for (const auto& r : reactions) {
    s.nu.insert(s.nu.end(), r.nu.begin(), r.nu.end());
    s.basis.push_back(r.rate.basis);
  }
  return s;
}

bool Stoichiometry::independent() const {
  if (n_reactions == 0) return true;
  if (n_reactions > n_species) return false;
  Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(columns(*this));
  return qr.rank() == n_reactions;
}

std::optional<std::vector<double>> extents_from_flows(const Stoichiometry& s,
                                                      std::span<const double> in,
                                                      std::span<const double> out) {
  const auto n = static_cast<std::size_t>(s.n_species);
  if (s.n_reactions == 0 || in.size() != n || out.size() != n || !s.independent())
    return std::nullopt;
  Eigen::VectorXd dF(s.n_species);
  for (int i = 0; i < s.n_species; ++i)
    dF(i) = out[static_cast<std::size_t>(i)] - in[static_cast<std::size_t>(i)];
  const Eigen::VectorXd xi = columns(s).colPivHouseholderQr().solve(dF);
  return std::vector<double>(xi.data(), xi.data() + xi.size());
}

}  // namespace rxtrain
