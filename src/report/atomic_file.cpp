#include "rxtrain/report/atomic_file.hpp"

#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <fstream>
#include <system_error>

#include "rxtrain/base/error.hpp"

namespace rxtrain {

bool same_file(const std::filesystem::path& a, const std::filesystem::path& b) {
  std::error_code ec;
  if (std::filesystem::exists(a, ec) && std::filesystem::exists(b, ec)) {
    const bool same = std::filesystem::equivalent(a, b, ec);
    if (!ec) return same;
  }
  const auto na = std::filesystem::weakly_canonical(a, ec);
  if (ec) return a.lexically_normal() == b.lexically_normal();
  const auto nb = std::filesystem::weakly_canonical(b, ec);
  if (ec) return a.lexically_normal() == b.lexically_normal();
  return na == nb;
}

OutputSet::~OutputSet() {
  for (const auto& p : pending_) {
    std::error_code ec;
    std::filesystem::remove(p.temp, ec);  // best effort: a destructor must not throw
  }
}

void OutputSet::add(const std::filesystem::path& path, const std::string& content) {
  for (const auto& input : protected_)
    if (same_file(path, input))
      throw InputError({input.string(), 0, 0},
                       "output path " + path.string() +
                           " is the case file itself; choose another output path (the case "
                           "file is never written to)");
  std::error_code ec;
  const auto parent = path.parent_path();
  if (!parent.empty()) {
    std::filesystem::create_directories(parent, ec);
    if (ec) throw OutputError("cannot create folder " + parent.string() + ": " + ec.message());
  }
  // The process id keeps two concurrent runs from sharing a temporary.
  auto temp = path;
  temp += ".tmp-" + std::to_string(::getpid()) + "-" + std::to_string(pending_.size());
  {
    std::ofstream f(temp, std::ios::binary | std::ios::trunc);
    if (!f) throw OutputError("cannot write " + path.string() + ": " + std::strerror(errno));
    pending_.push_back({temp, path});
    f << content;
    f.flush();
    if (!f) throw OutputError("cannot write " + path.string() + ": " + std::strerror(errno));
  }
}

void OutputSet::commit() {
  for (auto it = pending_.begin(); it != pending_.end();) {
    std::error_code ec;
    std::filesystem::rename(it->temp, it->target, ec);
    if (ec) throw OutputError("cannot replace " + it->target.string() + ": " + ec.message());
    it = pending_.erase(it);
  }
}

}  // namespace rxtrain
