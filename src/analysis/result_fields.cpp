#include "rxtrain/analysis/result_fields.hpp"

#include <array>

namespace rxtrain {

namespace {

using R = ResultScope;
using V = std::optional<double>;

// Where species i stands among the case's wanted products (-1: not one).
int product_position(const TrainResult& r, int i) {
  const auto& id = r.species.at(static_cast<std::size_t>(i));
  for (std::size_t k = 0; k < r.products.size(); ++k)
    if (r.products[k] == id) return static_cast<int>(k);
  return -1;
}

constexpr std::array kTrain{
    ResultFieldSpec{
        "X", "-", R::Train,
        [](const TrainResult& r, const StageResult*, int) -> V { return r.conversion; }},
    ResultFieldSpec{"T_out", "K", R::Train,
                    [](const TrainResult& r, const StageResult*, int) -> V { return r.outlet.T; }},
};

constexpr std::array kStage{
    ResultFieldSpec{"volume", "m3", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) { return s->volume; }},
    ResultFieldSpec{"catalyst_mass", "kg", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) { return s->catalyst_mass; }},
    ResultFieldSpec{"bulk_density", "kg/m3", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) { return s->bulk_density; }},
    ResultFieldSpec{"space_time", "s", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) { return s->space_time; }},
    ResultFieldSpec{
        "space_velocity", "1/s", R::Stage,
        [](const TrainResult&, const StageResult* s, int) { return s->space_velocity; }},
    ResultFieldSpec{"ghsv", "1/h", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) { return s->ghsv; }},
    ResultFieldSpec{"whsv", "1/h", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) { return s->whsv; }},
    ResultFieldSpec{"lhsv", "1/h", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) { return s->lhsv; }},
    ResultFieldSpec{"duty", "W", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V { return s->duty; }},
    ResultFieldSpec{"area", "m2", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      if (!s->exchanger_size) return std::nullopt;
                      return s->exchanger_size->area;
                    }},
    ResultFieldSpec{"lmtd", "K", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      if (!s->exchanger_size) return std::nullopt;
                      return s->exchanger_size->lmtd;
                    }},
    ResultFieldSpec{"T_peak", "K", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V { return s->T_max; }},
    ResultFieldSpec{"T_min", "K", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V { return s->T_min; }},
    ResultFieldSpec{
        "conversion", "-", R::Stage,
        [](const TrainResult&, const StageResult* s, int) -> V { return s->conversion; }},
    ResultFieldSpec{"inlet.T", "K", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V { return s->inlet.T; }},
    ResultFieldSpec{"inlet.P", "Pa", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V { return s->inlet.P; }},
    ResultFieldSpec{"outlet.T", "K", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V { return s->outlet.T; }},
    ResultFieldSpec{"outlet.P", "Pa", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V { return s->outlet.P; }},
    // Beds with geometry (empty elsewhere; dP empty at constant pressure).
    ResultFieldSpec{"dP", "Pa", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      return s->hydraulics ? s->hydraulics->dP : std::nullopt;
                    }},
    ResultFieldSpec{"length", "m", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      if (!s->hydraulics) return std::nullopt;
                      return s->hydraulics->length;
                    }},
    ResultFieldSpec{"diameter", "m", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      if (!s->hydraulics) return std::nullopt;
                      return s->hydraulics->geometry.diameter;
                    }},
    ResultFieldSpec{"velocity_in", "m/s", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      if (!s->hydraulics) return std::nullopt;
                      return s->hydraulics->velocity_in;
                    }},
    // Cooled tubular stages (empty elsewhere).
    ResultFieldSpec{"coolant.T_out", "K", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      return s->coolant ? V(s->coolant->T_out) : std::nullopt;
                    }},
    ResultFieldSpec{"coolant.duty", "W", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      return s->coolant ? V(s->coolant->duty) : std::nullopt;
                    }},
    ResultFieldSpec{"coolant.dT_max", "K", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      return s->coolant ? V(s->coolant->dT_max) : std::nullopt;
                    }},
    ResultFieldSpec{"hot_spot.z", "m", R::Stage,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      return s->hot_spot ? V(s->hot_spot->z) : std::nullopt;
                    }},
    ResultFieldSpec{"over_limit", "K", R::Stage,
                    [](const TrainResult& r, const StageResult* s, int) -> V {
                      if (!r.limit_check.applies() || !is_reactor(s->kind)) return std::nullopt;
                      return r.limit_check.past(s->id);
                    }},
    ResultFieldSpec{"inlet.flows", "mol/s", R::Flow,
                    [](const TrainResult&, const StageResult* s, int i) -> V {
                      return s->inlet.F.at(static_cast<std::size_t>(i));
                    }},
    ResultFieldSpec{"outlet.flows", "mol/s", R::Flow,
                    [](const TrainResult&, const StageResult* s, int i) -> V {
                      return s->outlet.F.at(static_cast<std::size_t>(i));
                    }},
    ResultFieldSpec{"x_out", "-", R::Flow,
                    [](const TrainResult&, const StageResult* s, int i) -> V {
                      return mole_fractions(s->outlet).at(static_cast<std::size_t>(i));
                    }},
    ResultFieldSpec{"yield", "-", R::Product,
                    [](const TrainResult& r, const StageResult* s, int i) -> V {
                      const int k = product_position(r, i);
                      if (k < 0 || k >= static_cast<int>(s->yield.size())) return std::nullopt;
                      return s->yield[static_cast<std::size_t>(k)];
                    }},
    ResultFieldSpec{"selectivity", "-", R::Product,
                    [](const TrainResult& r, const StageResult* s, int i) -> V {
                      const int k = product_position(r, i);
                      if (k < 0 || k >= static_cast<int>(s->selectivity.size()))
                        return std::nullopt;
                      return s->selectivity[static_cast<std::size_t>(k)];
                    }},
    ResultFieldSpec{"rate", "mol/(kg*s)", R::Reaction,
                    [](const TrainResult& r, const StageResult* s, int j) -> V {
                      const auto rates = mean_rates(r, *s);
                      if (!rates) return std::nullopt;
                      return rates->at(static_cast<std::size_t>(j));
                    }},
    ResultFieldSpec{"equilibrium.X_ad_eq", "-", R::Equilibrium,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      return s->equilibrium ? V(s->equilibrium->X_ad_eq) : std::nullopt;
                    }},
    ResultFieldSpec{"equilibrium.T_ad_eq", "K", R::Equilibrium,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      return s->equilibrium ? V(s->equilibrium->T_ad_eq) : std::nullopt;
                    }},
    ResultFieldSpec{"equilibrium.X_eq_out", "-", R::Equilibrium,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      return s->equilibrium ? V(s->equilibrium->X_eq_out) : std::nullopt;
                    }},
    ResultFieldSpec{"equilibrium.approach_X", "-", R::Equilibrium,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      return s->equilibrium ? V(s->equilibrium->approach_X) : std::nullopt;
                    }},
    ResultFieldSpec{"equilibrium.approach_T", "K", R::Equilibrium,
                    [](const TrainResult&, const StageResult* s, int) -> V {
                      return s->equilibrium ? s->equilibrium->approach_T : std::nullopt;
                    }},
};

}  // namespace

std::optional<std::vector<double>> mean_rates(const TrainResult& r, const StageResult& s) {
  if (!is_reactor(s.kind)) return std::nullopt;
  auto xi = extents_from_flows(r.stoichiometry, s.inlet.F, s.outlet.F);
  if (!xi) return std::nullopt;
  for (std::size_t j = 0; j < xi->size(); ++j) {
    const std::optional<double> per =
        r.stoichiometry.basis.at(j) == RateBasis::Catalyst ? s.catalyst_mass : s.volume;
    if (!per || *per <= 0) return std::nullopt;
    (*xi)[j] /= *per;
  }
  return xi;
}

std::string_view result_field_unit(const ResultFieldSpec& f, const Stoichiometry& s, int index) {
  if (f.scope != ResultScope::Reaction) return f.unit;
  return s.basis.at(static_cast<std::size_t>(index)) == RateBasis::Catalyst ? "mol/(kg*s)"
                                                                            : "mol/(m3*s)";
}

std::span<const ResultFieldSpec> train_result_fields() { return kTrain; }
std::span<const ResultFieldSpec> stage_result_fields() { return kStage; }

}  // namespace rxtrain
