// rxtrain merge OUT.csv SHARD.csv... [--json PATH]
#include <fmt/format.h>

#include <cstdio>
#include <fstream>
#include <iterator>
#include <memory>
#include <string>
#include <vector>

#include "commands.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/sweep/summary.hpp"
#include "rxtrain/sweep/sweep_csv.hpp"

namespace rxtrain::cli {

namespace {

struct MergeCommandOptions {
  std::string out_path;
  std::vector<std::string> shards;
  std::string json_path;
};

int run_merge_command(const MergeCommandOptions& o) {
  std::vector<std::pair<std::string, std::string>> files;
  for (const auto& path : o.shards) {
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError({path, 0, 0}, "cannot read this shard file");
    files.emplace_back(
        path, std::string((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>()));
  }
  const sweep::MergeResult m = sweep::merge_sweep_csv(files);
  OutputSet out;
  for (const auto& path : o.shards) out.protect(path);  // never overwrite a shard
  out.add(o.out_path, m.csv);
  if (!o.json_path.empty()) {
    const auto summary = sweep::summarize_study(m.header.outputs, m.header.margin, m.rows);
    out.add(o.json_path, sweep::sweep_json_text(m.header, {}, m.input_names, m.rows, summary));
  }
  out.commit();
  std::string text =
      fmt::format("merged {} shards into {}: {} runs:", o.shards.size(), o.out_path, m.runs);
  for (const auto& [status, n] : m.statuses) text += fmt::format(" {} {},", n, status);
  text.back() = '\n';
  std::fputs(text.c_str(), stdout);
  return 0;
}

}  // namespace

Action setup_merge(CLI::App& app) {
  auto o = std::make_shared<MergeCommandOptions>();
  app.add_option("out", o->out_path, "Merged CSV to write")->required();
  app.add_option("shards", o->shards,
                 "The CSVs of shards 1..N of one study (rxtrain sweep --shard K/N --csv)")
      ->required();
  app.add_option("--json", o->json_path,
                 "Also write the merged study as JSON (rows, percentiles, design margin), as "
                 "rxtrain sweep --json writes it");
  return [o] { return run_merge_command(*o); };
}

}  // namespace rxtrain::cli
