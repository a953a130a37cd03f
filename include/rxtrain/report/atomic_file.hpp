// All-or-nothing output: every file of a run is first written to a
// temporary file beside its destination, and only when all of them are
// written are they renamed into place. A failure before commit() leaves
// every existing output untouched and no temporary file behind.
//
// Example:
//   OutputSet out;
//   out.add("result.json", json_text);
//   out.add("csv/stages.csv", csv_text);
//   out.commit();  // renames both; throws OutputError on failure
#pragma once

#include <filesystem>
#include <stdexcept>
#include <string>
#include <vector>

namespace rxtrain {

class OutputError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

class OutputSet {
 public:
  OutputSet() = default;
  ~OutputSet();  // removes temporaries not yet committed; never throws
  OutputSet(const OutputSet&) = delete;
  OutputSet& operator=(const OutputSet&) = delete;

  // Writes `content` to a temporary file next to `path` (creating missing
  // parent folders). Throws OutputError naming the path.
  void add(const std::filesystem::path& path, const std::string& content);
  // Renames every temporary onto its destination.
  void commit();

 private:
  struct Pending {
    std::filesystem::path temp;
    std::filesystem::path target;
  };
  std::vector<Pending> pending_;
};

}  // namespace rxtrain
