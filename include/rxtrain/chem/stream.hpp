// A process stream passed between stages: T (K), P (Pa), molar flows (mol/s)
// in the case's species order.
#pragma once

#include <optional>
#include <vector>

namespace rxtrain {

struct Stream {
  double T = 0;
  double P = 0;
  std::vector<double> F;

  double total_flow() const;
};

// Mole fractions in species order (all 0 for an empty stream). Flows below
// zero, round-off at complete conversion, count as 0.
std::vector<double> mole_fractions(const Stream& s);

// Mass flow of each species (kg/s) and their sum, from molar masses in
// species order (kg/mol); empty when `molar_mass` is (a case whose species
// do not all have one).
std::optional<std::vector<double>> species_mass_flows(const Stream& s,
                                                      const std::vector<double>& molar_mass);
std::optional<double> mass_flow(const Stream& s, const std::vector<double>& molar_mass);

// How well a stage keeps mass: (in - out) / in. Round-off, about 1e-15,
// when every reaction is balanced in mass; a case that gives molar masses
// but no formulas can hold a reaction that is not, and this shows it.
std::optional<double> mass_balance_closure(const Stream& in, const Stream& out,
                                           const std::vector<double>& molar_mass);

// Overall conversion of the key species against the train's feed:
// X = (F_key,feed - F_key) / F_key,feed.
struct ConversionBasis {
  int key = 0;
  double F_key_feed = 0;  // mol/s, > 0
  double conversion(const double* F) const { return (F_key_feed - F[key]) / F_key_feed; }
  double conversion(const Stream& s) const { return conversion(s.F.data()); }
};

}  // namespace rxtrain
