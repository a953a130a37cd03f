#include "rxtrain/sweep/sampling.hpp"

#include <fmt/format.h>

#include <cmath>
#include <numbers>

namespace rxtrain::sweep {

std::uint64_t mix64(std::uint64_t x) {
  // SplitMix64 (Steele, Lea & Flood 2014): golden-ratio increment, then
  // Stafford's "Mix13" variant of the MurmurHash3 finalizer.
  x += 0x9E3779B97F4A7C15ULL;
  x = (x ^ (x >> 30)) * 0xBF58476D1CE4E5B9ULL;
  x = (x ^ (x >> 27)) * 0x94D049BB133111EBULL;
  return x ^ (x >> 31);
}

double uniform01(std::uint64_t seed, std::uint64_t run, std::uint32_t input, std::uint32_t draw) {
  const std::uint64_t counter = (static_cast<std::uint64_t>(input) << 32) | draw;
  const std::uint64_t key = mix64(mix64(mix64(seed) ^ run) ^ counter);
  // The top 53 bits, centred in their cell: never exactly 0 or 1, so ln u
  // and the inverse CDFs stay finite.
  return (static_cast<double>(key >> 11) + 0.5) * 0x1.0p-53;
}

double standard_normal(std::uint64_t seed, std::uint64_t run, std::uint32_t input) {
  const double u0 = uniform01(seed, run, input, 0);
  const double u1 = uniform01(seed, run, input, 1);
  return std::sqrt(-2.0 * std::log(u0)) * std::cos(2.0 * std::numbers::pi * u1);
}

double Distribution::sample(std::uint64_t seed, std::uint64_t run, std::uint32_t input) const {
  switch (kind) {
    case Kind::Normal:
      return a + b * standard_normal(seed, run, input);
    case Kind::Uniform:
      return a + (b - a) * uniform01(seed, run, input, 0);
    case Kind::LogNormal:
      return a * std::exp(b * standard_normal(seed, run, input));
  }
  return a;
}

const char* distribution_name(Distribution::Kind kind) {
  switch (kind) {
    case Distribution::Kind::Normal:
      return "normal";
    case Distribution::Kind::Uniform:
      return "uniform";
    case Distribution::Kind::LogNormal:
      return "lognormal";
  }
  return "?";
}

std::string Distribution::to_string() const {
  return fmt::format("{}({},{})", distribution_name(kind), a, b);
}

}  // namespace rxtrain::sweep
