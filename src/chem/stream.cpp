#include "rxtrain/chem/stream.hpp"

#include <numeric>

namespace rxtrain {

double Stream::total_flow() const { return std::accumulate(F.begin(), F.end(), 0.0); }

}  // namespace rxtrain
