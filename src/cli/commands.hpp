// The subcommands of the command line, one table (see main.cpp). Each
// command adds its options to its CLI11 subcommand and returns the action
// to run once the command line has been parsed.
#pragma once

#include <CLI/CLI.hpp>
#include <functional>

namespace rxtrain::cli {

using Action = std::function<int()>;

Action setup_run(CLI::App& app);
Action setup_check(CLI::App& app);
Action setup_thermo(CLI::App& app);
Action setup_staging(CLI::App& app);
Action setup_compare(CLI::App& app);
Action setup_optimize(CLI::App& app);
Action setup_sweep(CLI::App& app);
Action setup_merge(CLI::App& app);
Action setup_stability(CLI::App& app);
Action setup_fit(CLI::App& app);

// Exit codes (also in --help): 0 success, 2 input error, 3 solver failure,
// 4 output could not be written.
inline constexpr int kExitInput = 2;
inline constexpr int kExitSolver = 3;
inline constexpr int kExitOutput = 4;

}  // namespace rxtrain::cli
