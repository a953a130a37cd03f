// Reproducible random draws for Monte Carlo studies.
//
// Every draw is a pure function of (seed, run, input, draw): a counter-based
// generator, so a run's inputs are the same whichever thread or shard runs
// it, and adding a sampled input leaves the other inputs' draws unchanged.
// The mixing function is SplitMix64's output function (Steele, Lea & Flood,
// "Fast splittable pseudorandom number generators", OOPSLA 2014), applied
// in a chain:
//   key  = mix(mix(mix(seed) ^ run) ^ (input << 32 | draw))
//   u    = ((key >> 11) + 0.5) * 2^-53          in (0, 1), never 0 or 1
// Normal deviates use the Box-Muller transform (Box & Muller, Ann. Math.
// Statist. 29 (1958) 610-611) on draws 0 and 1 of the same input, cosine
// branch only: z = sqrt(-2 ln u0) cos(2 pi u1). The distributions are our
// own code rather than <random>'s, whose algorithms the C++ standard leaves
// to each library, so the same seed gives the same numbers everywhere the
// same libm is used.
#pragma once

#include <cstdint>
#include <string>

namespace rxtrain::sweep {

// SplitMix64's 64-bit finalizer (a bijection).
std::uint64_t mix64(std::uint64_t x);

// Uniform deviate in the open interval (0, 1).
double uniform01(std::uint64_t seed, std::uint64_t run, std::uint32_t input, std::uint32_t draw);

// Standard normal deviate (mean 0, SD 1).
double standard_normal(std::uint64_t seed, std::uint64_t run, std::uint32_t input);

// A distribution of one uncertain input, parameters in SI.
struct Distribution {
  enum class Kind { Normal, Uniform, LogNormal };
  Kind kind = Kind::Normal;
  // Normal: mean, SD (> 0). Uniform: low, high (low < high).
  // LogNormal: median (> 0), sigma (> 0) = SD of ln X, so X = median exp(sigma z).
  double a = 0;
  double b = 1;

  double sample(std::uint64_t seed, std::uint64_t run, std::uint32_t input) const;
  // Canonical text, e.g. "normal(403.15,5)" (shortest round-trip numbers), used
  // in the study's identity.
  std::string to_string() const;
};

const char* distribution_name(Distribution::Kind kind);

}  // namespace rxtrain::sweep
