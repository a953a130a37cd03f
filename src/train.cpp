#include "rxtrain/train.hpp"

#include <type_traits>

#include "rxtrain/stages/exchanger.hpp"

namespace rxtrain {

TrainResult run_train(const Case& c, const TrainOptions& options) {
  const Mechanism& mech = c.mechanism;
  const ConversionBasis basis = c.conversion_basis();
  SunContext ctx;  // one per run, shared by every tubular stage

  TrainResult result;
  result.title = c.title;
  for (const auto& s : mech.species()) result.species.push_back(s.id);
  result.key = mech.species()[c.key].id;
  result.feed = c.feed;
  result.warnings = c.warnings;

  Stream stream = c.feed;
  for (const auto& spec : c.train) {
    StageResult r = std::visit(
        [&](const auto& s) -> StageResult {
          using T = std::decay_t<decltype(s)>;
          if constexpr (std::is_same_v<T, ExchangerSpec>) {
            return run_exchanger(mech, s, stream, basis);
          } else if (s.type == ReactorType::Pfr) {
            return run_pfr(mech, s, stream, basis, ctx, options.pfr);
          } else {
            return run_cstr(mech, s, stream, basis, ctx, options.cstr);
          }
        },
        spec);
    for (const auto& w : r.warnings) result.warnings.push_back(w);
    stream = r.outlet;
    result.stages.push_back(std::move(r));
  }
  result.outlet = stream;
  result.conversion = basis.conversion(stream);
  return result;
}

}  // namespace rxtrain
