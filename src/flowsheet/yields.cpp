#include "rxtrain/flowsheet/yields.hpp"

#include <cmath>

#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain {

namespace {

// |nu_key / nu_P| in the first reaction that forms P (the loader makes
// sure one does).
double stoichiometric_ratio(const Mechanism& mech, int key, int p) {
  for (const auto& rx : mech.reactions())
    if (rx.nu[p] > 0 && rx.nu[key] != 0) return std::abs(rx.nu[key] / rx.nu[p]);
  for (const auto& rx : mech.reactions())
    if (rx.nu[p] > 0) return 1.0 / rx.nu[p];  // the key takes no part: per unit of P formed
  return 1.0;
}

}  // namespace

ProductYields product_yields(const Case& c, const Stream& s, const Stream* fed) {
  ProductYields y;
  const Stream& feed = fed ? *fed : c.feed;
  const double F_key_feed = feed.F[c.key];
  const double converted = F_key_feed - s.F[c.key];
  for (const int p : c.products) {
    const double formed = stoichiometric_ratio(c.mechanism, c.key, p) * (s.F[p] - feed.F[p]);
    y.yield.push_back(formed / F_key_feed);
    // Below round-off of the key's flow nothing is converted and S has no value.
    if (converted > 1e-12 * F_key_feed)
      y.selectivity.push_back(formed / converted);
    else
      y.selectivity.push_back(std::nullopt);
  }
  return y;
}

void add_product_yields(const Case& c, TrainResult& result) {
  if (c.products.empty()) return;
  for (const int p : c.products) result.products.push_back(c.mechanism.species()[p].id);
  // What has been fed so far: the first stage's part of the feed, then
  // each quench's side stream as it joins.
  Stream fed = c.feed;
  const double rest = 1 - c.quench_shares();
  for (auto& f : fed.F) f *= rest;
  for (auto& st : result.stages) {
    if (st.side_stream)
      for (std::size_t i = 0; i < fed.F.size(); ++i) fed.F[i] += st.side_stream->F[i];
    ProductYields y = product_yields(c, st.outlet, &fed);
    st.yield = std::move(y.yield);
    st.selectivity = std::move(y.selectivity);
  }
  ProductYields y = product_yields(c, result.outlet, &fed);
  result.yield = std::move(y.yield);
  result.selectivity = std::move(y.selectivity);
}

}  // namespace rxtrain
