// The case file of an optimized layout (`rxtrain optimize --write-case`):
// the case as written, with its top-level `train` replaced by the layout's
// stages (design_train in optimize.hpp), so that `rxtrain run` reproduces
// the optimum. The case with that train is checked as a loaded one
// (validate_case) before any text is made; its fields are written under
// the keys and in the SI units of the field table (case_fields.hpp). Everything else in the file,
// comments and sources included, is kept as the user wrote it.
//
// Example:
//   const std::string text = design_case_text(c, original_text, d, d.best, units, "opt.yaml");
//   out.add("opt.yaml", text);
#pragma once

#include <string>

#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/studies/optimize.hpp"

namespace rxtrain {

// `case_text` is the case file as read. The train block is found as the
// line that starts with `train:` in column 0 and the lines after it up to
// the next top-level key; the text returned is loaded back with
// load_case_from_string (named `name`) before it is returned, so a file
// the loader would refuse is never written. Throws InputError (at the
// case file) when the case has no such block (a top level in flow style).
std::string design_case_text(const Case& c, const std::string& case_text, const DesignResult& d,
                             const DesignLayout& layout, const UnitParser& units,
                             const std::string& name);

}  // namespace rxtrain
