// A case file with fitted values written in (`rxtrain fit --write-case`,
// with `--into` a design case): each fitted field's scalar is replaced in
// the text as written, so comments, layout and every other value stay;
// a rate constant estimated at a reference temperature brings its T_ref
// (replaced, or added beside A). The text is loaded back before it is
// returned, so a file the loader would refuse is never written.
#pragma once

#include <string>

#include "rxtrain/base/units.hpp"
#include "rxtrain/fit/fit.hpp"

namespace rxtrain::fit {

// `text` is the case file as read, named `file` in messages; `name` the
// file to be written. Throws InputError at `file` where a fitted path has
// no scalar in the text (e.g. an order the case leaves to the default:
// write the rate's orders out).
std::string fitted_case_text(const std::string& text, const std::string& file, const FitResult& r,
                             const UnitParser& units, const std::string& name);

}  // namespace rxtrain::fit
