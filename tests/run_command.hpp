// Test helper: runs the rxtrain binary with arguments and captures its exit
// code, stdout and stderr (through temporary files; POSIX shell).
#pragma once

#include <sys/wait.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

namespace rxtrain::test {

struct CommandResult {
  int exit_code = -1;
  std::string out;
  std::string err;
};

inline std::string slurp(const std::filesystem::path& p) {
  std::ifstream f(p);
  std::stringstream s;
  s << f.rdbuf();
  return s.str();
}

// `args` is appended to the binary's path as shell words; callers quote.
inline CommandResult run_rxtrain(const std::string& args) {
  static int counter = 0;  // test-local: unique capture files within one process
  const auto dir = std::filesystem::temp_directory_path();
  const auto tag = std::to_string(::getpid()) + "_" + std::to_string(counter++);
  const auto out = dir / ("rxtrain_out_" + tag), err = dir / ("rxtrain_err_" + tag);
  const std::string cmd = std::string("'") + RXTRAIN_BINARY + "' " + args + " >'" + out.string() +
                          "' 2>'" + err.string() + "'";
  const int status = std::system(cmd.c_str());
  CommandResult r;
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.out = slurp(out);
  r.err = slurp(err);
  std::filesystem::remove(out);
  std::filesystem::remove(err);
  return r;
}

}  // namespace rxtrain::test
