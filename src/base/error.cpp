#include "rxtrain/base/error.hpp"

namespace rxtrain {

std::string format_diagnostic(const SourceLocation& where, const std::string& severity,
                              const std::string& message) {
  std::string out;
  if (!where.file.empty()) out += where.file + ":";
  if (where.line > 0) {
    out += std::to_string(where.line) + ":";
    if (where.column > 0) out += std::to_string(where.column) + ":";
  }
  if (!out.empty()) out += " ";
  out += severity + ": " + message;
  return out;
}

InputError::InputError(SourceLocation where, const std::string& message)
    : std::runtime_error(format_diagnostic(where, "error", message)),
      where_(std::move(where)),
      message_(message) {}

InfeasibleError::InfeasibleError(SourceLocation where, const std::string& message,
                                 std::optional<double> best, std::string best_quantity)
    : SolverError(format_diagnostic(where, "error", message)),
      where_(std::move(where)),
      message_(message),
      best_(best),
      best_quantity_(std::move(best_quantity)) {}

}  // namespace rxtrain
