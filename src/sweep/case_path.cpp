#include "rxtrain/sweep/case_path.hpp"

#include <fmt/format.h>

#include <cmath>
#include <variant>

#include "rxtrain/base/suggest.hpp"

namespace rxtrain::sweep {

namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

CasePath make(std::string name, SiUnit unit, PathField field, int index = -1) {
  CasePath p;
  p.name = std::move(name);
  p.unit = std::move(unit);
  p.field = field;
  p.index = index;
  return p;
}

CasePath positive(CasePath p) {
  p.lo = 0;
  p.lo_open = true;
  return p;
}

SiUnit plain() { return SiUnit::of("1", "a plain number"); }

SiUnit rate_constant_unit(const RateLaw& law) {
  double total_order = 0;
  for (double o : law.orders) total_order += o;
  const bool per_cat = law.basis == RateBasis::Catalyst;
  const bool pressure = law.driving == Driving::Pressure;
  return SiUnit::per_power(per_cat ? "mol/(kg*s)" : "mol/(m3*s)", pressure ? "Pa" : "mol/m3",
                           total_order, "a rate constant");
}

}  // namespace

bool CasePath::contains(double v) const {
  if (!std::isfinite(v)) return false;
  if (lo_open ? !(v > lo) : !(v >= lo)) return false;
  if (hi_open ? !(v < hi) : !(v <= hi)) return false;
  return true;
}

std::string CasePath::domain_text() const {
  const bool has_lo = std::isfinite(lo), has_hi = std::isfinite(hi);
  if (has_lo && has_hi)
    return fmt::format("{} {:g} and {} {:g}", lo_open ? "above" : "at least", lo,
                       hi_open ? "below" : "at most", hi);
  if (has_lo) return fmt::format("{} {:g}", lo_open ? "above" : "at least", lo);
  if (has_hi) return fmt::format("{} {:g}", hi_open ? "below" : "at most", hi);
  return "finite";
}

CasePathTable::CasePathTable(const Case& base) {
  const Mechanism& mech = base.mechanism;
  paths_.push_back(positive(make("feed.T", SiUnit::of("K", "a temperature"), PathField::FeedT)));
  paths_.push_back(positive(make("feed.P", SiUnit::of("Pa", "a pressure"), PathField::FeedP)));
  paths_.push_back(
      positive(make("feed.flow", SiUnit::of("mol/s", "a molar flow"), PathField::FeedFlow)));
  for (int i = 0; i < mech.n_species(); ++i) {
    const std::string& id = mech.species()[i].id;
    CasePath f =
        make("feed.flows." + id, SiUnit::of("mol/s", "a molar flow"), PathField::FeedFlowOf, i);
    f.lo = 0;
    paths_.push_back(f);
    CasePath x = make("feed.composition." + id, plain(), PathField::FeedFraction, i);
    x.lo = 0;
    x.hi = 1;
    paths_.push_back(x);
  }
  for (std::size_t k = 0; k < base.train.size(); ++k) {
    const int ki = static_cast<int>(k);
    if (const auto* r = std::get_if<ReactorSpec>(&base.train[k])) {
      if (r->type == ReactorType::Cstr) has_stirred_tank_ = true;
      const std::string pre = "train." + r->id + ".";
      if (r->catalyst_mass)
        paths_.push_back(
            positive(make(pre + "catalyst", SiUnit::of("kg", "a mass"), PathField::Catalyst, ki)));
      else if (r->volume)
        paths_.push_back(
            positive(make(pre + "volume", SiUnit::of("m3", "a volume"), PathField::Volume, ki)));
      if (r->target_conversion) {
        CasePath t = make(pre + "target.conversion", plain(), PathField::StageTarget, ki);
        t.lo = 0, t.hi = 1, t.lo_open = t.hi_open = true;
        paths_.push_back(t);
      }
      if (r->bulk_density)
        paths_.push_back(positive(make(pre + "bulk_density", SiUnit::of("kg/m3", "a density"),
                                       PathField::BulkDensity, ki)));
    } else {
      const auto& x = std::get<ExchangerSpec>(base.train[k]);
      const std::string pre = "train." + x.id + ".";
      if (x.T_out)
        paths_.push_back(positive(
            make(pre + "T_out", SiUnit::of("K", "a temperature"), PathField::ExchangerTout, ki)));
      if (x.duty)
        paths_.push_back(
            make(pre + "duty", SiUnit::of("W", "a power"), PathField::ExchangerDuty, ki));
    }
  }
  for (int j = 0; j < mech.n_reactions(); ++j) {
    const Reaction& rx = mech.reactions()[j];
    const std::string pre = "reactions." + rx.id + ".";
    paths_.push_back(
        positive(make(pre + "rate.A", rate_constant_unit(rx.rate), PathField::RateA, j)));
    CasePath ea =
        make(pre + "rate.Ea", SiUnit::of("J/mol", "an energy per mole"), PathField::RateEa, j);
    ea.chemistry_units = true;
    paths_.push_back(ea);
    if (rx.rate.T_ref)
      paths_.push_back(positive(
          make(pre + "rate.T_ref", SiUnit::of("K", "a temperature"), PathField::RateTref, j)));
    if (rx.equilibrium.kind == EquilibriumSource::Kind::VantHoff) {
      paths_.push_back(positive(make(pre + "equilibrium.K", plain(), PathField::EquilibriumK, j)));
      CasePath dh = make(pre + "equilibrium.dH", SiUnit::of("J/mol", "an energy per mole"),
                         PathField::EquilibriumDH, j);
      dh.chemistry_units = true;
      paths_.push_back(dh);
    }
  }
  if (mech.phase() == Phase::Liquid)
    for (int i = 0; i < mech.n_species(); ++i)
      if (mech.species()[i].density)
        paths_.push_back(positive(make("species." + mech.species()[i].id + ".density",
                                       SiUnit::of("kg/m3", "a density"), PathField::Density, i)));
}

std::vector<std::string> CasePathTable::names() const {
  std::vector<std::string> out;
  for (const auto& p : paths_) out.push_back(p.name);
  return out;
}

std::size_t CasePathTable::find(std::string_view name, const std::string& option) const {
  for (std::size_t i = 0; i < paths_.size(); ++i)
    if (paths_[i].name == name) return i;
  throw InputError({option, 0, 0}, fmt::format("unknown case path \"{}\"{}", name,
                                               suggest_nearest(name, names(), "valid names", 40)));
}

double CasePathTable::base_value(std::size_t i, const Case& base) const {
  const CasePath& p = paths_[i];
  const auto& mech = base.mechanism;
  const auto reactor = [&]() -> const ReactorSpec& {
    return std::get<ReactorSpec>(base.train[p.index]);
  };
  const auto exchanger = [&]() -> const ExchangerSpec& {
    return std::get<ExchangerSpec>(base.train[p.index]);
  };
  switch (p.field) {
    case PathField::FeedT:
      return base.feed.T;
    case PathField::FeedP:
      return base.feed.P;
    case PathField::FeedFlow:
      return base.feed.total_flow();
    case PathField::FeedFlowOf:
      return base.feed.F[p.index];
    case PathField::FeedFraction:
      return base.feed.F[p.index] / base.feed.total_flow();
    case PathField::Volume:
      return reactor().volume.value_or(0);
    case PathField::Catalyst:
      return reactor().catalyst_mass.value_or(0);
    case PathField::BulkDensity:
      return reactor().bulk_density.value_or(0);
    case PathField::StageTarget:
      return reactor().target_conversion.value_or(0);
    case PathField::ExchangerTout:
      return exchanger().T_out.value_or(0);
    case PathField::ExchangerDuty:
      return exchanger().duty.value_or(0);
    case PathField::RateA:
      return mech.reactions()[p.index].rate.A;
    case PathField::RateEa:
      return mech.reactions()[p.index].rate.Ea;
    case PathField::RateTref:
      return mech.reactions()[p.index].rate.T_ref.value_or(0);
    case PathField::EquilibriumK:
      return mech.reactions()[p.index].equilibrium.K_ref;
    case PathField::EquilibriumDH:
      return mech.reactions()[p.index].equilibrium.dH;
    case PathField::Density:
      return mech.species()[p.index].density.value_or(0);
  }
  return 0;
}

CaseEditor::CaseEditor(const CasePathTable& table, std::vector<std::size_t> which) {
  for (std::size_t i : which) {
    paths_.push_back(table.at(i));
    switch (table.at(i).field) {
      case PathField::RateA:
      case PathField::RateEa:
      case PathField::RateTref:
      case PathField::EquilibriumK:
      case PathField::EquilibriumDH:
      case PathField::Density:
        edits_mechanism_ = true;
        break;
      default:
        break;
    }
  }
}

void CaseEditor::apply(const Case& base, std::span<const double> values, Case& work) const {
  const SourceLocation where{base.file, 0, 0};
  std::vector<Species> species;
  std::vector<Reaction> reactions;
  if (edits_mechanism_) {
    species = base.mechanism.species();
    reactions = base.mechanism.reactions();
  }
  // The feed and every edited stage start again from the base, so edits
  // that interact (flow and composition, catalyst and bulk density) always
  // combine the same way whatever the previous run set.
  work.feed = base.feed;
  for (const auto& p : paths_)
    if (p.index >= 0 &&
        (p.field == PathField::Volume || p.field == PathField::Catalyst ||
         p.field == PathField::BulkDensity || p.field == PathField::StageTarget ||
         p.field == PathField::ExchangerTout || p.field == PathField::ExchangerDuty))
      work.train[p.index] = base.train[p.index];

  for (std::size_t n = 0; n < paths_.size(); ++n) {
    const CasePath& p = paths_[n];
    const double v = values[n];
    if (!p.contains(v))
      throw InputError(where, fmt::format("{} = {:.6g} (SI) is out of range: it must be {}", p.name,
                                          v, p.domain_text()));
    auto& F = work.feed.F;
    switch (p.field) {
      case PathField::FeedT:
        work.feed.T = v;
        break;
      case PathField::FeedP:
        work.feed.P = v;
        break;
      case PathField::FeedFlow: {
        const double total = work.feed.total_flow();
        for (double& f : F) f *= v / total;
        break;
      }
      case PathField::FeedFlowOf:
        F[p.index] = v;
        break;
      case PathField::FeedFraction: {
        const double total = work.feed.total_flow();
        const double rest = total - F[p.index];
        if (rest <= 0 && v < 1)
          throw InputError(where, fmt::format("{} = {:.6g}: the feed holds no other species to "
                                              "make up the remaining {:.6g}",
                                              p.name, v, 1 - v));
        for (std::size_t i = 0; i < F.size(); ++i)
          if (static_cast<int>(i) != p.index) F[i] *= rest > 0 ? (1 - v) * total / rest : 0;
        F[p.index] = v * total;
        break;
      }
      case PathField::Volume:
        std::get<ReactorSpec>(work.train[p.index]).volume = v;
        break;
      case PathField::Catalyst: {
        auto& r = std::get<ReactorSpec>(work.train[p.index]);
        r.catalyst_mass = v;
        r.volume = v / *r.bulk_density;
        break;
      }
      case PathField::BulkDensity: {
        // With catalyst given, the mass stays and the bed volume follows
        // (as the loader reads it); with volume given, the volume stays.
        auto& r = std::get<ReactorSpec>(work.train[p.index]);
        r.bulk_density = v;
        if (r.catalyst_mass) r.volume = *r.catalyst_mass / v;
        break;
      }
      case PathField::StageTarget:
        std::get<ReactorSpec>(work.train[p.index]).target_conversion = v;
        break;
      case PathField::ExchangerTout:
        std::get<ExchangerSpec>(work.train[p.index]).T_out = v;
        break;
      case PathField::ExchangerDuty:
        std::get<ExchangerSpec>(work.train[p.index]).duty = v;
        break;
      case PathField::RateA:
        reactions[p.index].rate.A = v;
        break;
      case PathField::RateEa:
        reactions[p.index].rate.Ea = v;
        break;
      case PathField::RateTref:
        reactions[p.index].rate.T_ref = v;
        break;
      case PathField::EquilibriumK:
        reactions[p.index].equilibrium.K_ref = v;
        break;
      case PathField::EquilibriumDH:
        reactions[p.index].equilibrium.dH = v;
        break;
      case PathField::Density:
        species[p.index].density = v;
        break;
    }
  }
  if (!(work.feed.F[work.key] > 0))
    throw InputError(where, fmt::format("the edited feed has no flow of the key species {}; "
                                        "conversion is measured against it",
                                        base.mechanism.species()[work.key].id));
  // Mechanism precompiles per-reaction data from its inputs: rebuild it
  // rather than patch it.
  if (edits_mechanism_)
    work.mechanism = Mechanism(base.mechanism.phase(), std::move(species), std::move(reactions));
}

}  // namespace rxtrain::sweep
