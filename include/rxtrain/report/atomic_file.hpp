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

  // Marks an input (the case file) that no output may replace: add() then
  // refuses a path naming the same file (InputError, exit 2).
  void protect(const std::filesystem::path& input) { protected_.push_back(input); }
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
  std::vector<std::filesystem::path> protected_;
};

// True when `a` and `b` name the same file: the same inode where both
// exist (through links, "./" or ".."), else the same normalized path.
bool same_file(const std::filesystem::path& a, const std::filesystem::path& b);

}  // namespace rxtrain
