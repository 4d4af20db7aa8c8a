#pragma once
// A small deterministic random source whose sequence depends only on its seed, on every
// platform and standard library (std::normal_distribution is implementation-defined, so the
// same serial number would not give the same unit everywhere). SplitMix64 for the bits
// (Steele, Lea & Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014; the
// constants from memory) and the Box-Muller transform for Gaussian values.

#include <cstdint>
#include <string_view>

namespace zout::sim {

// 64-bit FNV-1a hash of `text` (offset basis 14695981039346656037, prime 1099511628211;
// the published FNV parameters, from memory). Stable across runs and platforms, unlike
// std::hash.
std::uint64_t fnv1a_64(std::string_view text);

class SeededRandom {
 public:
  explicit SeededRandom(std::uint64_t seed) : state_(seed) {}

  std::uint64_t next_u64();
  // Uniform in [0, 1).
  double uniform();
  // Standard normal (mean 0, standard deviation 1).
  double gaussian();

 private:
  std::uint64_t state_;
  bool has_spare_ = false;
  double spare_ = 0.0;
};

}  // namespace zout::sim
