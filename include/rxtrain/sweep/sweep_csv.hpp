// The CSV of a study and the merge of its shards.
//
// Layout (SI, numbers in shortest round-trip form):
//   # rxtrain sweep
//   # version: 0.1.0
//   # case-sha256: <64 hex digits of the case file's bytes>
//   # mode: grid | monte-carlo
//   # vary: feed.T=393.15:473.15:41        (grid; one line per axis)
//   # sample: feed.T=normal(403.15,5)      (Monte Carlo; one per input)
//   # runs: 41
//   # seed: 7                              (Monte Carlo)
//   # rtol: 1e-08                          (the integrator's tolerance)
//   # outputs: X,T_out,R1.T_max
//   # margin: R3.catalyst_mass             (sized stages among the outputs, if any)
//   # shard: 1/1
//   run,feed.T,X,T_out,R1.T_max,status,message
//   0,393.15,0.52,...,ok,
// A failed run keeps its inputs, leaves every output empty and gives the
// reason. Every line but "# shard" is the study's identity; shards of one
// study share it, and merging them gives byte for byte the CSV of the
// unsharded run.
#pragma once

#include <cstddef>
#include <map>
#include <string>
#include <utility>
#include <vector>

#include "rxtrain/sweep/sweep.hpp"

namespace rxtrain::sweep {

struct StudyHeader {
  std::string version;
  std::string case_sha256;
  std::vector<std::string> definition;  // Study::definition()
  std::vector<std::string> outputs;     // output column names
  // The columns the design margin is taken over (summary.hpp); empty: none.
  std::vector<std::string> margin = {};
  // The SI unit of every input and output column, by name, in column
  // order ("-" for a plain number): the CSV's "# units:" line, the JSON's
  // "units" object.
  std::vector<std::pair<std::string, std::string>> units = {};
};

std::string sweep_csv(const StudyHeader& header, const Shard& shard,
                      const std::vector<std::string>& input_names, const std::vector<RunRow>& rows);

struct MergeResult {
  std::string csv;                              // the merged CSV
  std::size_t runs = 0;                         // rows merged
  std::map<std::string, std::size_t> statuses;  // rows per status
  StudyHeader header;                           // read back from the identity lines
  std::vector<std::string> input_names;
  std::vector<RunRow> rows;  // read back, for the summary
};

// Merges the CSVs of shards 1..N of one study, given as (file name, text)
// in any order. Throws InputError naming the file when a file is not a
// sweep CSV, belongs to another study (its identity lines differ), has a
// shard count different from the others, repeats a shard, lacks rows of
// its block, or when a shard is missing.
MergeResult merge_sweep_csv(const std::vector<std::pair<std::string, std::string>>& files);

// Splits one CSV line into fields (RFC 4180 quoting).
std::vector<std::string> split_csv_line(const std::string& line);

}  // namespace rxtrain::sweep
