// What `rxtrain optimize` writes: the terminal table (the optimum's beds,
// exchangers, active limits and optimality conditions, gains, the bed-count
// trade-off, warnings and the caution) and the JSON document (SI). Display
// units in the table only.
#pragma once

#include <string>

#include "rxtrain/studies/optimize.hpp"

namespace rxtrain {

std::string optimize_table(const DesignResult& d, const DesignOptions& options);
std::string optimize_json_text(const DesignResult& d);

}  // namespace rxtrain
