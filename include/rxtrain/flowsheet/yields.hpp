// Yields and selectivities of the case's wanted products (`products:`),
// cumulative from the train's feed like the key's conversion.
#pragma once

#include <optional>
#include <vector>

#include "rxtrain/case/case.hpp"

namespace rxtrain {

struct TrainResult;

// Of one stream against the feed, per product P of c.products, with
// r = |nu_key / nu_P| in the first reaction that forms P:
//   Y_P = r (F_P - F_P,feed) / F_key,feed
//   S_P = r (F_P - F_P,feed) / (F_key,feed - F_key)
// so that Y = S X. S is empty where no key has been converted. "The feed"
// is what has been fed so far (`fed`: the first stage's feed plus every
// side stream joined upstream), as for the conversion; the case's feed
// when `fed` is null.
struct ProductYields {
  std::vector<double> yield;
  std::vector<std::optional<double>> selectivity;
};
ProductYields product_yields(const Case& c, const Stream& s, const Stream* fed = nullptr);

// Fills every stage's and the train's yields and selectivities (nothing
// when the case names no products), each against what was fed up to it.
void add_product_yields(const Case& c, TrainResult& result);

}  // namespace rxtrain
