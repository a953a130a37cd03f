// A process stream passed between stages: T (K), P (Pa), molar flows (mol/s)
// in the case's species order.
#pragma once

#include <vector>

namespace rxtrain {

struct Stream {
  double T = 0;
  double P = 0;
  std::vector<double> F;

  double total_flow() const;
};

// Overall conversion of the key species against the train's feed:
// X = (F_key,feed - F_key) / F_key,feed.
struct ConversionBasis {
  int key = 0;
  double F_key_feed = 0;  // mol/s, > 0
  double conversion(const double* F) const { return (F_key_feed - F[key]) / F_key_feed; }
  double conversion(const Stream& s) const { return conversion(s.F.data()); }
};

}  // namespace rxtrain
