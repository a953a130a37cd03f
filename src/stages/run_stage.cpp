#include "rxtrain/stages/run_stage.hpp"

#include <type_traits>
#include <variant>

namespace rxtrain {

StageResult run_stage(const StageSpec& spec, const Stream& inlet, const StageContext& ctx) {
  return std::visit(
      [&](const auto& s) -> StageResult {
        using T = std::decay_t<decltype(s)>;
        if constexpr (std::is_same_v<T, ExchangerSpec>) {
          return run_exchanger(ctx.mech, s, inlet, ctx.basis);
        } else if constexpr (std::is_same_v<T, InterchangerSpec>) {
          // Its cold side's outlet is the loop's tear: flowsheet/loop runs it.
          throw InputError(s.where,
                           "stage " + s.id + ": an interchanger runs inside its loop only");
        } else if constexpr (std::is_same_v<T, QuenchSpec>) {
          if (!ctx.feed)
            throw InputError(s.where, "stage " + s.id + ": a quench runs inside a train only");
          const Stream side = quench_side_stream(s, *ctx.feed);
          const ConversionBasis after{ctx.basis.key, ctx.basis.F_key_feed + side.F[ctx.basis.key]};
          return run_quench(ctx.mech, s, inlet, side, ctx.basis, after);
        } else if (s.type == ReactorType::Pfr) {
          return run_pfr(ctx.mech, s, inlet, ctx.basis, ctx.pfr, ctx.pfr_options);
        } else {
          return run_cstr(ctx.mech, s, inlet, ctx.basis, ctx.cstr, ctx.cstr_options);
        }
      },
      spec);
}

}  // namespace rxtrain
