// Trains of several cases run side by side (see run_trains_batched).
#include <stdexcept>
#include <type_traits>
#include <variant>

#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/flowsheet/yields.hpp"
#include "rxtrain/stages/exchanger.hpp"

namespace rxtrain {

bool train_batchable(const Case& c, const TrainOptions& options) {
  if (options.equilibrium_views) return false;
  for (const auto& spec : c.train)
    if (std::holds_alternative<QuenchSpec>(spec) || std::holds_alternative<InterchangerSpec>(spec))
      return false;  // side streams and loops: the lone path
  for (const auto& spec : c.train)
    if (const auto* r = std::get_if<ReactorSpec>(&spec);
        r != nullptr && !pfr_batchable(c.mechanism, *r, options.solvers.tube))
      return false;
  return true;
}

std::vector<TrainResult> run_trains_batched(std::span<const Case* const> cases,
                                            const TrainOptions& options, TrainWorkspace& ws) {
  std::vector<TrainResult> results(cases.size());
  if (cases.empty()) return results;
  const std::size_t stages = cases[0]->train.size();
  std::vector<Stream> streams;
  for (std::size_t i = 0; i < cases.size(); ++i) {
    const Case& c = *cases[i];
    if (c.train.size() != stages || !train_batchable(c, options))
      throw std::invalid_argument("run_trains_batched: cases of different layouts");
    results[i] = TrainResult::for_case(c);
    streams.push_back(c.feed);
  }
  std::vector<PfrBatchItem> items(cases.size());
  for (std::size_t k = 0; k < stages; ++k) {
    if (std::holds_alternative<ExchangerSpec>(cases[0]->train[k])) {
      for (std::size_t i = 0; i < cases.size(); ++i) {
        const Case& c = *cases[i];
        const auto* x = std::get_if<ExchangerSpec>(&c.train[k]);
        if (x == nullptr) throw std::invalid_argument("run_trains_batched: layouts differ");
        results[i].stages.push_back(
            run_exchanger(c.mechanism, *x, streams[i], c.conversion_basis()));
      }
    } else {
      for (std::size_t i = 0; i < cases.size(); ++i) {
        const Case& c = *cases[i];
        const auto* r = std::get_if<ReactorSpec>(&c.train[k]);
        if (r == nullptr) throw std::invalid_argument("run_trains_batched: layouts differ");
        items[i] = PfrBatchItem{&c.mechanism, r, streams[i], c.conversion_basis()};
      }
      std::vector<StageResult> done = run_pfr_batch(items, ws.pfr_batch(), options.solvers.tube);
      for (std::size_t i = 0; i < cases.size(); ++i)
        results[i].stages.push_back(std::move(done[i]));
    }
    for (std::size_t i = 0; i < cases.size(); ++i) {
      StageResult& s = results[i].stages.back();
      const auto& basis = cases[i]->space_velocity_basis;
      if (!basis.empty()) add_space_velocities(cases[i]->mechanism, s, basis);
      for (const auto& w : s.warnings) results[i].warnings.push_back(w);
      streams[i] = s.outlet;
    }
  }
  for (std::size_t i = 0; i < cases.size(); ++i) {
    results[i].outlet = streams[i];
    results[i].conversion = cases[i]->conversion_basis().conversion(streams[i]);
    results[i].limit_check = check_limits(*cases[i], options, results[i].stages);
    add_product_yields(*cases[i], results[i]);
  }
  return results;
}

}  // namespace rxtrain
