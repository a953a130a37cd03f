// Error types. Only main() catches them and maps them to exit codes:
// InputError -> 2, SolverError -> 3.
#pragma once

#include <optional>
#include <stdexcept>
#include <string>

namespace rxtrain {

// A place in an input file. Line and column are 1-based; 0 means unknown.
struct SourceLocation {
  std::string file;
  int line = 0;
  int column = 0;
};

// A problem the user can fix in the case file. what() reads
// "FILE:LINE:COL: error: message" (parts that are unknown are left out).
class InputError : public std::runtime_error {
 public:
  InputError(SourceLocation where, const std::string& message);
  const SourceLocation& where() const { return where_; }
  const std::string& message() const { return message_; }

 private:
  SourceLocation where_;
  std::string message_;
};

// A numerical failure, naming the stage and position, e.g.
// "R1 at V = 1.84 m3: CVODE failed: ...".
class SolverError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// A target a stage cannot reach (beyond equilibrium, or past complete
// conversion), found while running: located at the stage's entry in the case
// file and mapped to the solver exit code, since only running the train
// tells. what() reads "FILE:LINE:COL: error: message". `best`, where
// known, is the most the stage can reach, as a number for callers that
// go on from it (the Python module): of `best_quantity` ("conversion", or
// "mole fraction of SO2" for an outlet-purity target, where it is the least).
class InfeasibleError : public SolverError {
 public:
  InfeasibleError(SourceLocation where, const std::string& message,
                  std::optional<double> best = std::nullopt, std::string best_quantity = {});
  const SourceLocation& where() const { return where_; }
  const std::string& message() const { return message_; }
  const std::optional<double>& best() const { return best_; }
  const std::string& best_quantity() const { return best_quantity_; }

 private:
  SourceLocation where_;
  std::string message_;
  std::optional<double> best_;
  std::string best_quantity_;
};

// Formats "FILE:LINE:COL: error: message" the way every diagnostic does.
std::string format_diagnostic(const SourceLocation& where, const std::string& severity,
                              const std::string& message);

}  // namespace rxtrain
