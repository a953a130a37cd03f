#include "rxtrain/case/synthetic_case.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>
#include <vector>

namespace rxtrain {

namespace {

// A small generator with a fixed algorithm (xorshift32, Marsaglia 2003), so
// the mechanisms are the same on every platform (std:: distributions are
// not specified bit for bit).
class Random {
 public:
  explicit Random(std::uint32_t seed) : x_(seed != 0 ? seed : 2463534242u) {}
  std::uint32_t next() {
    x_ ^= x_ << 13;
    x_ ^= x_ >> 17;
    x_ ^= x_ << 5;
    return x_;
  }
  double uniform(double lo, double hi) { return lo + (hi - lo) * (next() / 4294967296.0); }
  int below(int n) { return static_cast<int>(next() % static_cast<std::uint32_t>(n)); }

 private:
  std::uint32_t x_;
};

constexpr double kFeedT = 600.0;          // K
constexpr double kFeedP = 1.0e6;          // Pa
constexpr double kFeedFlow = 100.0;       // mol/s
constexpr double kSpaceTime = 3.0;        // s at inlet conditions
constexpr double kFormationSpan = 1.0e4;  // J/mol, h_f(S0) - h_f(S(n-1))

}  // namespace

Case synthetic_case(int n_species, int n_reactions, std::uint32_t seed, int window) {
  if (n_species < 2 || n_reactions < 1 || window < 0)
    throw std::invalid_argument(
        "synthetic_case: needs >= 2 species, >= 1 reaction and a window >= 0");
  const int n = n_species;
  Random rnd(seed);

  std::vector<Species> species;
  std::vector<double> h_f(n);
  for (int i = 0; i < n; ++i) {
    Species s;
    s.id = "S" + std::to_string(i);
    s.name = s.id;
    h_f[i] = -kFormationSpan * i / (n - 1);
    s.thermo = ThermoModel(CpConstant{rnd.uniform(30.0, 60.0)}, h_f[i], 200.0);
    species.push_back(std::move(s));
  }

  // Products lie within `reach` indices above the reactants.
  const int reach = window > 0 ? std::max(2, window) : std::max(2, n / 5);
  auto above = [&](int i) { return std::min(n - 1, i + 1 + rnd.below(reach)); };
  std::vector<Reaction> reactions;
  for (int j = 0; j < n_reactions; ++j) {
    Reaction rx;
    rx.id = "r" + std::to_string(j);
    rx.nu.assign(n, 0.0);
    rx.rate.orders.assign(n, 0.0);
    const int a = j % (n - 1);
    const bool bimolecular = n > 2 && j % 2 == 1;
    std::vector<int> reactants{a}, products;
    if (bimolecular) {
      int b = std::min(n - 2, a + 1 + rnd.below(reach));
      if (b == a) b = a > 0 ? a - 1 : a + 1;
      reactants.push_back(b);
      const int top = std::max(a, b);
      products = {above(top), above(top)};
    } else {
      products = {above(a)};
    }
    for (int i : reactants) {
      rx.nu[i] -= 1;
      rx.rate.orders[i] += 1;  // mass action
    }
    for (int i : products) rx.nu[i] += 1;
    auto term = [&](int i) {
      const double c = std::abs(rx.nu[i]);
      return (c == 1 ? "" : std::to_string(static_cast<int>(c)) + " ") + species[i].id;
    };
    for (std::size_t k = 0; k < reactants.size(); ++k)
      rx.equation += (k ? " + " : "") + term(reactants[k]);
    rx.equation += " =>";
    std::vector<int> seen;
    for (int i : products) {
      if (std::find(seen.begin(), seen.end(), i) != seen.end()) continue;
      rx.equation += (seen.empty() ? " " : " + ") + term(i);
      seen.push_back(i);
    }
    // Rate constants at 600 K spread over two decades: first order about
    // 1/s, second order about 1/s at the feed's total concentration.
    const double C = kFeedP / (kGasConstant * kFeedT);  // mol/m3
    const double k600 = std::pow(10.0, rnd.uniform(-1.0, 1.0));
    rx.rate.A = bimolecular ? k600 / C : k600;
    rx.rate.Ea = rnd.uniform(50e3, 90e3);
    rx.rate.T_ref = kFeedT;
    rx.rate.driving = Driving::Concentration;
    rx.rate.basis = RateBasis::Volume;
    for (int i = 0; i < n; ++i) rx.dH_298 += rx.nu[i] * h_f[i];
    reactions.push_back(std::move(rx));
  }

  Case c;
  c.title = "synthetic mechanism, " + std::to_string(n) + " species, " +
            std::to_string(n_reactions) + " reactions (invented data)";
  c.file = "<synthetic>";
  c.mechanism = Mechanism(Phase::Gas, std::move(species), std::move(reactions));
  // 99 % of the feed in the first tenth of the species, 1 % spread over the rest.
  const int fed = std::max(1, n / 10);
  std::vector<double> F(n);
  for (int i = 0; i < n; ++i)
    F[i] = i < fed ? 0.99 * kFeedFlow / fed : 0.01 * kFeedFlow / std::max(1, n - fed);
  c.feed = Stream{kFeedT, kFeedP, F};
  c.key = 0;
  ReactorSpec bed;
  bed.id = "R1";
  bed.type = ReactorType::Pfr;
  bed.heat = HeatMode::Adiabatic;
  bed.volume = kSpaceTime * kFeedFlow * kGasConstant * kFeedT / kFeedP;
  bed.where = {c.file, 0, 0};
  c.train.push_back(bed);
  return c;
}

}  // namespace rxtrain
