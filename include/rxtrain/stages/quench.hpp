// A cold shot (`type: quench`): a side stream mixed adiabatically into the
// process stream (models/energy_balance.hpp, mix_adiabatic). No reaction,
// no volume. Its side stream is the quench's own (`stream`) or, with
// `share`, that part of the case's feed at the quench's T (default the
// feed's) and the feed's pressure.
#pragma once

#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

// The side stream a quench adds, from the case's feed for a share.
Stream quench_side_stream(const QuenchSpec& spec, const Stream& feed);

// The quench on `inlet`; `basis_after` counts the key fed so far with the
// side stream included (the conversion convention with side streams:
// X = 1 - F_key / F_key,fed), so the quench's conversion steps down by the
// key the side stream brings.
StageResult run_quench(const Mechanism& mech, const QuenchSpec& spec, const Stream& inlet,
                       const Stream& side, const ConversionBasis& basis_before,
                       const ConversionBasis& basis_after);

}  // namespace rxtrain
